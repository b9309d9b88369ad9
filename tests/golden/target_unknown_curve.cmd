check
@/target_unknown_curve.tacet
