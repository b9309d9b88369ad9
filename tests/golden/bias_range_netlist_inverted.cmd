bias
@/bias_range_netlist_inverted.tacet
