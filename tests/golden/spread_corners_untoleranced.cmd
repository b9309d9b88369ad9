spread
@/spread_corners_untoleranced.tacet
--corners
--output
@/never-written.txt
