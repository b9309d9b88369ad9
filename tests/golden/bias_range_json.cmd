bias
@/bias_ambient_range.tacet
--format
json
