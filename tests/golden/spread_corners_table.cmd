spread
@/spread_divider.tacet
--runs
300
--seed
4
--corners
