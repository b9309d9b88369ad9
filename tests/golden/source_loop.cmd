ac
@/source_loop.tacet
--probe
a
