# scatterprop chart: convergence of the mean and of the interval ends of an
# output with the number of samples (logarithmic axis).
# Data (sp_data): index 0: n mean; index 1: n mean-2se mean+2se;
#                 index 2: n lo hi (NaN rows when not given).
# Variables: sp_stem sp_data sp_width sp_height sp_title sp_xlabel
#   sp_ylabel mean_title has_se se_title has_interval interval_title.
@VARS@
@STYLE@
set xlabel sp_xlabel
set ylabel sp_ylabel
set logscale x
set autoscale xfix
# Room above and below the lines so none sits on the border; sample counts
# as plain integers (1000, 1e6 would read as 1e+06).
set offsets graph 0, graph 0, graph 0.05, graph 0.05
set format x '%.0f'
set rmargin 6
# The key goes below the axis label, out of the data's way.
set key outside bottom center horizontal
set bmargin 5.5

set terminal pngcairo size sp_width, sp_height font sp_font noenhanced background rgb 'white'
set output sp_stem . '.png'
plot for [k = 1:has_se] sp_data index 1 using 1:2:3 with filledcurves \
       fs transparent solid 0.25 noborder lc rgb c_sky title se_title, \
     sp_data index 0 using 1:2 with linespoints lt 1 title mean_title, \
     for [k = 1:has_interval] sp_data index 2 using 1:2 with linespoints lt 2 dt 2 \
       title interval_title, \
     for [k = 1:has_interval] sp_data index 2 using 1:3 with linespoints lt 2 dt 2 notitle
set terminal svg size sp_width, sp_height font sp_font fontscale sp_svg_fontscale noenhanced \
    background rgb 'white'
set output sp_stem . '.svg'
replot
unset output
