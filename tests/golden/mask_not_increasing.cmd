check
@/mask_not_increasing.tacet
