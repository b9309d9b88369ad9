noise
@/rc_lowpass.tacet
--probe
out
--threads
two
