ac
@/loop_follower.tacet
--probe
z(outt)
--output
@/ac_z_unknown.out
