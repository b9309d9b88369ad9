ac
@/rc_lowpass.tacet
--probe
out
--set
R1=1meg
