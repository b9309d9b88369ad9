loop
@/loop_follower.tacet
--opamp
U2
--output
@/loop_bad_opamp.out
