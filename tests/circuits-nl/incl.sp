* incl.sp: an include relative to this file, quotes, a .lib section that calls another section
.include 'parts/models_lib_user.inc'
.lib "parts/corners.lib" typ
vdd vdd 0 1.2
vg g 0 0.7
rd vdd d 10k
mt d g 0 0 nb4 w=wtyp l=ltyp
xi d g vdd inv
.end
