spread
@/check_floating.tacet
--runs
10
