ac
@/rc_lowpass.tacet
--probe
out
--points
2000000000
