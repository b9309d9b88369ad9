show
@/blocks.tacet
