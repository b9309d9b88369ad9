check
@/check_stability.tacet
--format
json
