# scatterprop house style, inlined into every chart script in place of the
# template's STYLE line.  Edit it here to change the look of every chart.
#
# Type: DejaVu Sans (Debian package fonts-dejavu-core), 11 pt on a
#   900 x 600 canvas; the title 12 pt, left-aligned above the plot.
# Colour: the palette of Okabe, M. and Ito, K. (2008), "Color Universal
#   Design (CUD): how to make figures and presentations that are friendly
#   to colorblind people", https://jfly.uni-koeln.de/color/ , in the order
#   blue, vermillion, bluish green, reddish purple, orange, sky blue,
#   black, yellow (yellow last: it has the least contrast on white).
#   Line style also changes from the second series on (dashes), so a chart
#   still reads in grey print.
# Frame: only the left and bottom axes, thin and grey; ticks outside; a
#   light grid behind the data; a key without a box; the title left-aligned.
# Needs the variable sp_title (set with the chart variables above it).
set encoding utf8
sp_font       = 'DejaVu Sans,11'
sp_font_title = 'DejaVu Sans,12'
# The svg terminal writes a font size of N points as N user units (px),
# while pngcairo draws N points at 96 px per inch, 4/3 as large: the SVG
# terminal lines scale their fonts by 4/3 so that the SVG (embedded in the
# report, printed 180 mm wide) shows the same text size as the PNG.
sp_svg_fontscale = 4.0 / 3.0

c_blue       = '#0072B2'
c_vermillion = '#D55E00'
c_green      = '#009E73'
c_purple     = '#CC79A7'
c_orange     = '#E69F00'
c_sky        = '#56B4E9'
c_black      = '#000000'
c_yellow     = '#F0E442'
# Neutral tones (not part of the palette): text, axes, grid, and the fill
# of histogram bars (a pale tint of the sky blue, so curves stand out).
c_ink  = '#262626'
c_axis = '#8C8C8C'
c_grid = '#DEDEDE'
c_bars = '#C6E1F5'

set linetype 1 lc rgb c_blue       lw 2 pt 7 ps 0.6 dt 1
set linetype 2 lc rgb c_vermillion lw 2 pt 5 ps 0.6 dt 1
set linetype 3 lc rgb c_green      lw 2 pt 9 ps 0.7 dt 1
set linetype 4 lc rgb c_purple     lw 2 pt 13 ps 0.7 dt 1
set linetype 5 lc rgb c_orange     lw 2 pt 11 ps 0.7 dt 1
set linetype 6 lc rgb c_sky        lw 2 pt 7 ps 0.6 dt 1
set linetype 7 lc rgb c_black      lw 2 pt 5 ps 0.6 dt 1
set linetype 8 lc rgb c_yellow     lw 2 pt 9 ps 0.7 dt 1
set linetype cycle 8

set border 3 lw 1 lc rgb c_axis
set tics nomirror out scale 0.5,0.25 textcolor rgb c_ink
set mxtics
set style line 100 lc rgb c_grid lw 1 dt 1
set grid back xtics ytics ls 100
set key inside top right Right noreverse nobox opaque samplen 2.5 spacing 1.15 \
    textcolor rgb c_ink
set xlabel textcolor rgb c_ink
set ylabel textcolor rgb c_ink
# The title sits flush with the left axis, above the plot, as a label
# (tag 1000, clear of the templates' own labels 1..nlim).
set label 1000 sp_title at graph 0, graph 1 offset 0, character 1.4 left \
    font sp_font_title textcolor rgb c_ink
set style fill solid 1.0 noborder
set samples 201
set format x '%g'
set format y '%g'
set tmargin 3.5
