# scatterprop chart: histogram of an output of a run (probability density)
# with the coverage interval shaded and each limit marked.
# Data (sp_data): index 0, the bins: lo hi density count.
# Variables: sp_stem sp_data sp_width sp_height sp_title sp_xlabel
#   sp_ylabel bars_title has_cov cov_lo cov_hi cov_title nlim lim_value[]
#   lim_title[].
@VARS@
@STYLE@
set xlabel sp_xlabel
set ylabel sp_ylabel
# The key goes below the axis label, out of the data's way.
set key outside bottom center horizontal
set bmargin 5.5
set yrange [0:*]
set offsets graph 0.02, graph 0.02, graph 0.12, 0
if (has_cov) {
  set object 1 rect from first cov_lo, graph 0 to first cov_hi, graph 1 behind \
    fc rgb c_orange fs transparent solid 0.18 noborder
}
do for [i = 1:nlim] {
  set arrow i from first lim_value[i], graph 0 to first lim_value[i], graph 1 nohead \
    front lw 1.5 dt 2 lc rgb c_vermillion
  set label i lim_title[i] at first lim_value[i], graph 0.97 - 0.06 * (i - 1) \
    offset character 0.5, 0 left front textcolor rgb c_vermillion
}

set terminal pngcairo size sp_width, sp_height font sp_font noenhanced background rgb 'white'
set output sp_stem . '.png'
plot sp_data index 0 using (($1 + $2) / 2):3:($2 - $1) with boxes \
       fs solid 1.0 border lc rgb 'white' lc rgb c_bars title bars_title, \
     for [k = 1:has_cov] keyentry with boxes fs transparent solid 0.18 noborder \
       lc rgb c_orange title cov_title
set terminal svg size sp_width, sp_height font sp_font fontscale sp_svg_fontscale noenhanced \
    background rgb 'white'
set output sp_stem . '.svg'
replot
unset output
