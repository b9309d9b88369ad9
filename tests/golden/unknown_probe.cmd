ac
@/rc_lowpass.tacet
--probe
otu
