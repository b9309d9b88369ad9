check
@/check_rc.tacet
