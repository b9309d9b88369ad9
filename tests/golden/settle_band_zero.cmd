settle
@/rc_lowpass.tacet
--probe
out
--band
0
--output
@/settle_band_zero.out
