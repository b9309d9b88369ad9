rank
@/spread_divider.tacet
--slot
R1
