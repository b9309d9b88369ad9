loop
@/loop_follower.tacet
--from
100k
--to
100M
--per-decade
2
