show
@/rc_lowpass.tacet
--set
R1=1k
--set
R1=2k
