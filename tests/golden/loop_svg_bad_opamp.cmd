loop
@/check_stability.tacet
--format
svg
--opamp
U9
