sensitivity
@/sensitivity_stage.tacet
--probe
out
--at
10k
--format
csv
