spread
@/spread_divider.tacet
--runs
0
--output
@/never-written.txt
