settle
@/rc_lowpass.tacet
--probe
out
--input
R1
--output
@/settle_input_not_source.out
