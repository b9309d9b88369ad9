check
@/check_rc.tacet
--format
csv
