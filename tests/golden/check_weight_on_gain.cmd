check
@/check_weight_on_gain.tacet
