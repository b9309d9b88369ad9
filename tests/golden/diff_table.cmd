diff
netlists/vibration_logger.tacet
netlists/vibration_logger_rev_b.tacet
--band
2..4k
