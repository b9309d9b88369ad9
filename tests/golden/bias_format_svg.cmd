bias
@/bias_speaker_input.tacet
--format
svg
