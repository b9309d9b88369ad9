merge
@/spread_divider.tacet
