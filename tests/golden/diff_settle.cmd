diff
@/check_settle.tacet
@/diff_settle_new.tacet
