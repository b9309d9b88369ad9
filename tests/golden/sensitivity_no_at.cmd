sensitivity
@/sensitivity_stage.tacet
--probe
out
--output
@/sensitivity_no_at.out
