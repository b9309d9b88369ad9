bias
@/bias_ambient_range.tacet
--threads
-1
