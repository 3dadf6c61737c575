# scatterprop chart: exceedance curve of an output, P(Y > y) on a
# logarithmic axis, with each limit marked.
# Data (sp_data): index 0: y P(Y > y).
# Variables: sp_stem sp_data sp_width sp_height sp_title sp_xlabel
#   sp_ylabel curve_title nlim lim_value[] lim_title[].
@VARS@
@STYLE@
set xlabel sp_xlabel
set ylabel sp_ylabel
# The key goes below the axis label, out of the data's way.
set key outside bottom center horizontal
set bmargin 5.5
set logscale y
set yrange [*:1]
set mytics 10
# Decades labelled 1, 10⁻¹, 10⁻², ... in one notation (gnuplot's %g would
# mix 0.0001 and 1e-05): the automatic tics keep their marks, minor tics
# and grid, without text; the labelled tics sit on the same decades.
set format y ''
array sp_sup[10] = ['⁰', '¹', '²', '³', '⁴', '⁵', '⁶', '⁷', '⁸', '⁹']
set ytics add ('1' 1)
do for [k = 1:30] {
  set ytics add ('10⁻' . (k >= 10 ? sp_sup[k / 10 + 1] : '') . sp_sup[k % 10 + 1] 10.0**(-k))
}
do for [i = 1:nlim] {
  set arrow i from first lim_value[i], graph 0 to first lim_value[i], graph 1 nohead \
    front lw 1.5 dt 2 lc rgb c_vermillion
  set label i lim_title[i] at first lim_value[i], graph 0.97 - 0.06 * (i - 1) \
    offset character 0.5, 0 left front textcolor rgb c_vermillion
}

set terminal pngcairo size sp_width, sp_height font sp_font noenhanced background rgb 'white'
set output sp_stem . '.png'
plot sp_data index 0 using 1:2 with lines lt 1 title curve_title
set terminal svg size sp_width, sp_height font sp_font fontscale sp_svg_fontscale noenhanced \
    background rgb 'white'
set output sp_stem . '.svg'
replot
unset output
