check
@/check_settle.tacet
