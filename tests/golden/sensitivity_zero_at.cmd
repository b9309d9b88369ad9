sensitivity
@/sensitivity_stage.tacet
--probe
out
--at
0
--output
@/sensitivity_zero_at.out
