noise
@/rc_lowpass.tacet
--probe
out
--weight
A
