check
@/spec_zero_level.tacet
