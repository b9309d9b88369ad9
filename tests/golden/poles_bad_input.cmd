poles
@/loop_follower.tacet
--probe
out
--input
CL
--output
@/poles_bad_input.out
