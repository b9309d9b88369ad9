ac
@/rc_lowpass.tacet
--probe
out
--at=
