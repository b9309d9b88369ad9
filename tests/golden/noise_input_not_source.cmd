noise
@/rc_lowpass.tacet
--probe
out
--input
R1
