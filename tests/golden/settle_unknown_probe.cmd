settle
@/rc_lowpass.tacet
--probe
otu
--output
@/settle_unknown_probe.out
