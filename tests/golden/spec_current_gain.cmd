check
@/spec_current_gain.tacet
