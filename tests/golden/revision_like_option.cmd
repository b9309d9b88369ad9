show
--
--output=@/written:by-git
