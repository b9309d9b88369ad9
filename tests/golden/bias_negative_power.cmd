bias
@/bias_negative_power.tacet
