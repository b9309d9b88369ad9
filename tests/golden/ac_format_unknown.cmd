ac
@/rc_lowpass.tacet
--probe
out
--format
xml
