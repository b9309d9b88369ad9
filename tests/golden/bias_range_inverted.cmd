bias
@/bias_ambient_range.tacet
--ambient-range
70C..0C
