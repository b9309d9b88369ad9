noise
@/rc_lowpass.tacet
--probe
out
--band
20-20k
