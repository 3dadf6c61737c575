# scatterprop chart: inputs ranked by their share of the output's variance,
# largest at the top, as horizontal bars with the value beside each bar.
# Data (sp_data): index 0: rank share share_total label_at (fractions;
#   share_total is NaN when not given; label_at, where the value is
#   written, is the end of the longer bar).
# Variables: sp_stem sp_data sp_width sp_height sp_title sp_xlabel
#   ninputs input_name[] share_title has_total total_title sp_xmax.
@VARS@
@STYLE@
set xlabel sp_xlabel
set xrange [0:sp_xmax]
set xtics 0, 20, 100
set yrange [ninputs + 0.7:0.3]
set ytics scale 0 ()
do for [i = 1:ninputs] { set ytics add (input_name[i] i) }
set grid noytics
# The key goes below the axis label, out of the data's way.
set key outside bottom center horizontal
set bmargin 6.5

set terminal pngcairo size sp_width, sp_height font sp_font noenhanced background rgb 'white'
set output sp_stem . '.png'
plot sp_data index 0 using (0):1:(0):(100 * $2):($1 - 0.3):($1 + 0.3) with boxxyerror \
       fs solid 1.0 noborder lc rgb c_blue title share_title, \
     for [k = 1:has_total] sp_data index 0 using (0):1:(0):(100 * $3):($1 - 0.38):($1 + 0.38) \
       with boxxyerror fs empty border lc rgb c_vermillion lw 1.5 title total_title, \
     sp_data index 0 using (100 * $4):1:(sprintf('%.1f %%', 100 * $2)) \
       with labels left offset character 0.5, 0 textcolor rgb c_ink notitle
set terminal svg size sp_width, sp_height font sp_font fontscale sp_svg_fontscale noenhanced \
    background rgb 'white'
set output sp_stem . '.svg'
replot
unset output
