# scatterprop chart: probability plot of a fitted column against the chosen
# family: ordered data x_(i) over the fitted quantile at the plotting
# position p_i = (i - 0.5)/n, the line y = x, and a pointwise band.
# Data (sp_data): index 0, the points: quantile x_(i) p_i;
#                 index 1, the band: quantile lower upper;
#                 index 2, the line y = x: two points.
# Variables: sp_stem sp_data sp_width sp_height sp_title sp_xlabel
#   sp_ylabel points_title line_title has_band band_title.
@VARS@
@STYLE@
set xlabel sp_xlabel
set ylabel sp_ylabel
set key inside top left Left reverse

set terminal pngcairo size sp_width, sp_height font sp_font noenhanced background rgb 'white'
set output sp_stem . '.png'
# "for [k = 1:has_band]" draws the band only when has_band is 1.
plot for [k = 1:has_band] sp_data index 1 using 1:2:3 with filledcurves \
       fs transparent solid 0.22 noborder lc rgb c_sky title band_title, \
     sp_data index 2 using 1:2 with lines lw 1.5 dt 2 lc rgb c_vermillion title line_title, \
     sp_data index 0 using 1:2 with points pt 7 ps 0.7 lc rgb c_blue title points_title
set terminal svg size sp_width, sp_height font sp_font fontscale sp_svg_fontscale noenhanced \
    background rgb 'white'
set output sp_stem . '.svg'
replot
unset output
