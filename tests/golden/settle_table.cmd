settle
@/rc_lowpass.tacet
--probe
out
--points
11
