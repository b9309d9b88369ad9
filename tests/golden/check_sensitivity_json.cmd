check
@/sensitivity_stage.tacet
--sensitivity
--format
json
