ac
@/floating.tacet
--probe
out
