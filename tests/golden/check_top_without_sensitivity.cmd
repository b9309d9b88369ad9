check
@/sensitivity_stage.tacet
--top
3
