check
@/check_stability.tacet
