# scatterprop chart: an output against one input, one translucent dot per
# sample shown, with each limit on the output as a horizontal line.
# Data (sp_data): index 0: x y.
# Variables: sp_stem sp_data sp_width sp_height sp_title sp_xlabel
#   sp_ylabel points_title nlim lim_value[] lim_title[].
@VARS@
@STYLE@
set xlabel sp_xlabel
set ylabel sp_ylabel
set offsets graph 0.02, graph 0.02, graph 0.05, graph 0.05
# The key goes below the axis label: its sample dot inside the plot would
# read as one more point (a rising scatter fills the top right corner).
set key outside bottom center horizontal
set bmargin 5.5
do for [i = 1:nlim] {
  set arrow i from graph 0, first lim_value[i] to graph 1, first lim_value[i] nohead \
    front lw 1.5 dt 2 lc rgb c_vermillion
  set label i lim_title[i] at graph 0.01, first lim_value[i] offset 0, character 0.7 \
    left front textcolor rgb c_vermillion
}

set terminal pngcairo size sp_width, sp_height font sp_font noenhanced background rgb 'white'
set output sp_stem . '.png'
# '#99...' is ARGB: the dots are 60 % transparent, so dense regions read darker.
plot sp_data index 0 using 1:2 with points pt 7 ps 0.45 lc rgb '#990072B2' title points_title
set terminal svg size sp_width, sp_height font sp_font fontscale sp_svg_fontscale noenhanced \
    background rgb 'white'
set output sp_stem . '.svg'
replot
unset output
