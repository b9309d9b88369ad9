ac
@/rc_lowpass.tacet
--probe
out
--per-decade
0
