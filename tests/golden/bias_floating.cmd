bias
@/bias_floating.tacet
