* nmos_pmos.sp: NMOS and PMOS at the top level, BSIM4 and level 1, m and nf on the cards
.include models.inc
vdd vdd 0 1.2
vg g 0 0.7
mn1 d1 g 0 0 nb4 w=2u l=0.18u
MN2 d2 g 0 0 NB4 W=1.5U L=0.5U M=3
mn3 d3 g 0 0 nb4 w=4u l=0.2u nf=4
mp1 d4 g vdd vdd pb4 w=3u l=180n m=2 nf=2
mq1 d5 g 0 0 n1 w=10u l=1u
mq2 d6 g vdd vdd p1 w=20u l=2u m=4
r1 vdd d1 10k
r2 vdd d2 10k
r3 vdd d3 10k
r4 d4 0 10k
r5 vdd d5 10k
r6 d6 0 10k
.end
