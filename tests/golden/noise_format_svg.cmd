noise
@/rc_lowpass.tacet
--probe
out
--format
svg
