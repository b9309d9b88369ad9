rank
@/spread_divider.tacet
--slot
U1
