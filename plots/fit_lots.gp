# scatterprop chart: the lots of a column side by side, as overlaid
# empirical distribution functions, and the pooled fit's CDF if given.
# Data (sp_data): index i - 1 for lot i = 1..nlots: x F_n(x);
#                 index nlots, the pooled fit (when has_pooled): x F(x).
# Variables: sp_stem sp_data sp_width sp_height sp_title sp_xlabel
#   sp_ylabel nlots lot_title[] has_pooled pooled_title.
@VARS@
@STYLE@
set xlabel sp_xlabel
set ylabel sp_ylabel
set yrange [0:1]
set ytics 0.2
set key inside bottom right

set terminal pngcairo size sp_width, sp_height font sp_font noenhanced background rgb 'white'
set output sp_stem . '.png'
plot for [i = 1:nlots] sp_data index (i - 1) using 1:2 with steps lt i lw 1.75 \
       title lot_title[i], \
     for [k = 1:has_pooled] sp_data index nlots using 1:2 with lines lw 1.5 dt 2 \
       lc rgb c_ink title pooled_title
set terminal svg size sp_width, sp_height font sp_font fontscale sp_svg_fontscale noenhanced \
    background rgb 'white'
set output sp_stem . '.svg'
replot
unset output
