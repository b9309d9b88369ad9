report
@/rc_lowpass.tacet
--output
@/no-such-folder/report.html
