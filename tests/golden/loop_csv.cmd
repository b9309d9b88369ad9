loop
@/loop_follower.tacet
--format
csv
--at
1M,10M
