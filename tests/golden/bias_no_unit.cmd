bias
@/bias_no_unit.tacet
