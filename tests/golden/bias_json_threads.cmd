bias
@/bias_speaker_input.tacet
--format
json
--threads
3
