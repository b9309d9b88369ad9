check
@/rc_lowpass.tacet
