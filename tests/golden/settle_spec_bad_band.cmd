check
@/settle_spec_bad_band.tacet
