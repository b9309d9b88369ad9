diff
@/rc_lowpass.tacet
@/rc_lowpass.tacet
--probe
otu
