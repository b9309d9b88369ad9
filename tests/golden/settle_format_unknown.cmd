settle
@/rc_lowpass.tacet
--probe
out
--format
html
