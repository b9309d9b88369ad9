sensitivity
@/sensitivity_stage.tacet
--probe
otu
--at
10k
--output
@/sensitivity_bad_probe.out
