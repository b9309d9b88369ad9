noise
@/rc_lowpass.tacet
--probe
otu
