check
@/../../netlists/examples/phono_stage.tacet
