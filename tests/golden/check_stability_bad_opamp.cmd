check
@/check_stability_bad_opamp.tacet
