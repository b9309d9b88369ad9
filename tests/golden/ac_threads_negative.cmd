ac
@/rc_lowpass.tacet
--probe
out
--threads
-1
--output
@/never-written.txt
