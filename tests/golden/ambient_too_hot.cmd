show
@/rc_lowpass.tacet
--ambient
1e308K
