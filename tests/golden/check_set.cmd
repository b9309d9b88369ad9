check
@/check_rc.tacet
--set
C1=22n
