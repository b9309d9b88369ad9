settle
@/rc_lowpass.tacet
--probe
out
--to
10kHz
