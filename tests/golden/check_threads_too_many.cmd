check
@/check_rc.tacet
--threads
257
