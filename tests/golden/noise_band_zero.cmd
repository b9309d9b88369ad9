noise
@/rc_lowpass.tacet
--probe
out
--band
0..20k
