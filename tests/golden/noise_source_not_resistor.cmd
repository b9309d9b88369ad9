noise
@/rc_lowpass.tacet
--probe
out
--source
C1
