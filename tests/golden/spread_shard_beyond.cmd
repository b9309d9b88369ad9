spread
@/spread_divider.tacet
--shard
3/2
