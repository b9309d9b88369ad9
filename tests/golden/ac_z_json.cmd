ac
@/loop_follower.tacet
--probe
z(out)
--at
1k,1M
--format
json
