check
@/check_stability_too_large.tacet
