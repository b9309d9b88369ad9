spread
@/spread_bad_tol.tacet
