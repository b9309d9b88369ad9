noise
@/rc_lowpass.tacet
--probe
out
--band
20k..20
