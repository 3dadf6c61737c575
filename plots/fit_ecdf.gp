# scatterprop chart: empirical distribution function of a fitted column
# (right-continuous steps) with the CDF of each candidate fit, best first.
# Data (sp_data): index 0, the steps: x F_n(x);
#                 index i = 1..ncurves, candidate i: x F(x).
# Variables: sp_stem sp_data sp_width sp_height sp_title sp_xlabel
#   sp_ylabel steps_title ncurves cand_title[].
@VARS@
@STYLE@
set xlabel sp_xlabel
set ylabel sp_ylabel
set yrange [0:1]
set ytics 0.2
set key inside bottom right

set terminal pngcairo size sp_width, sp_height font sp_font noenhanced background rgb 'white'
set output sp_stem . '.png'
plot sp_data index 0 using 1:2 with steps lw 1.5 lc rgb c_ink title steps_title, \
     for [i = 1:ncurves] sp_data index i using 1:2 with lines lt i dt 1 + (i > 1) \
       title cand_title[i]
set terminal svg size sp_width, sp_height font sp_font fontscale sp_svg_fontscale noenhanced \
    background rgb 'white'
set output sp_stem . '.svg'
replot
unset output
