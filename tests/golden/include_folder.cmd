show
@/include_folder.tacet
