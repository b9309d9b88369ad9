loop
@/loop_follower.tacet
--format
json
--at
1M,10M
