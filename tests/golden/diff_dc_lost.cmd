diff
@/diff_dc_old.tacet
@/diff_dc_new.tacet
--probe
mid
--at
1k
