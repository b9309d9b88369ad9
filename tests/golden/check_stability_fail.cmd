check
@/check_stability_fail.tacet
