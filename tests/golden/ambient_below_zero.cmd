show
@/rc_lowpass.tacet
--ambient
-300C
