bias
@/bias_speaker_input.tacet
--band
20k..20
