diff
netlists/vibration_logger.tacet
netlists/vibration_logger_rev_b.tacet
--fail-above
0.1dB
--format
json
