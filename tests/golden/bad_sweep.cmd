ac
@/rc_lowpass.tacet
--probe
out
--from
20k
--to
10k
