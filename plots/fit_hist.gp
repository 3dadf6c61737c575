# scatterprop chart: histogram of a fitted column (probability density)
# with the density of each candidate fit, best first.
# Data (sp_data): index 0, the bins: lo hi density count;
#                 index i = 1..ncurves, candidate i: x pdf.
# Variables (set below): sp_stem sp_data sp_width sp_height sp_title
#   sp_xlabel sp_ylabel bars_title ncurves cand_title[].
@VARS@
@STYLE@
set xlabel sp_xlabel
set ylabel sp_ylabel
set yrange [0:*]
set offsets graph 0, graph 0, graph 0.08, 0
# The key goes below the axis label: no corner of a histogram is sure to be
# free of bars (a few values, a long tail), and an opaque key would hide
# the tops of those under it.
# Two entries a row (the data and the chosen fit first), and room below the
# axis label for each row.
set key outside bottom center horizontal maxcols 2
set bmargin 4.6 + 1.3 * ((ncurves + 2) / 2)

set terminal pngcairo size sp_width, sp_height font sp_font noenhanced background rgb 'white'
set output sp_stem . '.png'
plot sp_data index 0 using (($1 + $2) / 2):3:($2 - $1) with boxes \
       fs solid 1.0 border lc rgb 'white' lc rgb c_bars title bars_title, \
     for [i = 1:ncurves] sp_data index i using 1:2 with lines lt i dt 1 + (i > 1) \
       title cand_title[i]
set terminal svg size sp_width, sp_height font sp_font fontscale sp_svg_fontscale noenhanced \
    background rgb 'white'
set output sp_stem . '.svg'
replot
unset output
