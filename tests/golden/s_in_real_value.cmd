ac
@/s_in_real_value.tacet
--probe
out
