spread
@/spread_divider.tacet
--shard
1/2
--format
table
