ac
@/rc_lowpass.tacet
--probe
out
--at
1591.5494309189535
--format
json
