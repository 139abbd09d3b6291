* bins.sp: model bins selected by L and W (nch.1 nch.2 nch.3, cards in that order); boundaries belong
* to the first bin that covers them (ngspice 39)
.model nch.1 nmos level=14 version=4.8 lmin=0.1u lmax=1u wmin=0.1u wmax=10u
.model nch.2 nmos level=14 version=4.8 lmin=1u lmax=10u wmin=0.1u wmax=10u
.model nch.3 nmos level=14 version=4.8 lmin=0.1u lmax=10u wmin=10u wmax=100u
vdd vdd 0 1.2
vg g 0 0.7
rd vdd d 10k
mb1 d g 0 0 nch w=1u l=0.5u
mb2 d g 0 0 nch w=1u l=1u
mb3 d g 0 0 nch w=1u l=2u
mb4 d g 0 0 nch w=20u l=2u nf=4
mb5 d g 0 0 nch w=10u l=2u
mb6 d g 0 0 nch w=20u l=0.2u m=2
.end
