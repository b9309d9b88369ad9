show
@/not_utf8.tacet
