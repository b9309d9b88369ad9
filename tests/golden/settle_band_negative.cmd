settle
@/rc_lowpass.tacet
--probe
out
--band
-1%
--output
@/settle_band_negative.out
