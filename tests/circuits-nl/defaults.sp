* defaults.sp: W and L absent from the cards (BSIM4 uses 5u; level 1 the .options defw/defl) and
* .options scale (applied to written W and L only)
.include models.inc
.options defw=7u defl=3u scale=0.5
vdd vdd 0 1.2
vg g 0 0.8
rd vdd d 10k
ma d g 0 0 nb4
mb d g 0 0 n1
mc d g 0 0 nb4 w=4u l=1u
md d g 0 0 n1 l=2u
.end
