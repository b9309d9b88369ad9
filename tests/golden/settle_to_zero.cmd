settle
@/rc_lowpass.tacet
--probe
out
--to
0
--output
@/settle_to_zero.out
