show
@/bias_ambient_range.tacet
