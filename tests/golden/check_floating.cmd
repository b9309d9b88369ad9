check
@/check_floating.tacet
