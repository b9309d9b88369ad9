ac
@/bad_keyword.tacet
--probe
out
