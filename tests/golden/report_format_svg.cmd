report
@/rc_lowpass.tacet
--format
svg
