check
@/check_no_dc.tacet
