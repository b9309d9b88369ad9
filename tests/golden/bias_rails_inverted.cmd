bias
@/bias_rails_inverted.tacet
