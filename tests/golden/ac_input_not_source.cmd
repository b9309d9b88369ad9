ac
@/ac_input.tacet
--probe
out
--input
R1
