check
@/sensitivity_stage.tacet
--sensitivity
