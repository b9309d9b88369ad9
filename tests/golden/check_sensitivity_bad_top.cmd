check
@/sensitivity_stage.tacet
--sensitivity
--top
0
