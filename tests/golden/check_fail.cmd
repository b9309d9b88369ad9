check
@/check_rc_fail.tacet
