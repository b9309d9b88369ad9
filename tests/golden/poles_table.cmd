poles
@/loop_follower.tacet
--probe
out
--input
Vin
