poles
@/loop_follower.tacet
--format
json
