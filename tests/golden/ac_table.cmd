ac
@/rc_lowpass.tacet
--probe
out
--probe
i(C1)
--at
100,1591.5494309189535,10k
