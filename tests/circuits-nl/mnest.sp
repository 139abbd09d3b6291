* mnest.sp: m through subcircuit levels, as ngspice 39 does it (invented cells, BSIM4 defaults).
* An X card with m= gives its subcircuit a parameter m; every card of that subcircuit then takes
* the calling X card's m and its own m is lost. Which subcircuits get it depends on reading order.
.include models.inc
.option scale=1u
vdd vdd 0 1.2
vg g 0 0.7
* a one-transistor cell passing its own multiplier (mult) to its M card
.subckt cm d g s b w=1 l=1 nf=1 mult=1
mi d g s b nb4 w={w} l={l} nf={nf} m={mult}
.ends cm
* the same cell, but some X card calls it with m=: mult is lost everywhere
.subckt cmx d g s b w=1 l=1 nf=1 mult=1
mi d g s b nb4 w={w} l={l} nf={nf} m={mult}
.ends cmx
* a cell that declares m itself: m= on the X card is an ordinary parameter
.subckt cdecl d g s b w=1 l=1 m=1
mi d g s b nb4 w={w} l={l} m={m}
.ends cdecl
* a cell with two devices, called with and without m; it calls cmx and cm inside
.subckt pair d g s b
xa d g s b cmx w=2 l=0.5 mult=3
xb d g s b cm w=2 l=0.5 mult=3
mz d g s b nb4 w=1 l=0.5 m=2
.ends pair
xp1 vdd g 0 0 cm w=4 l=0.3 nf=2 mult=4
xp2 vdd g 0 0 cmx w=4 l=0.3 nf=2 mult=4
xp3 vdd g 0 0 cmx w=4 l=0.3 m=2
xp4 vdd g 0 0 cdecl w=3 l=0.3 m=3
xq1 vdd g 0 0 pair m=2
xq2 vdd g 0 0 pair
* read after its call: the X card inside gets m before the reader reaches it, so cm2 gets m too
xq3 vdd g 0 0 late m=5
.subckt cm2 d g s b w=1 l=1 mult=1
mi d g s b nb4 w={w} l={l} m={mult}
.ends cm2
.subckt late d g s b
xc d g s b cm2 w=2 l=0.4 mult=7
.ends late
xq4 vdd g 0 0 cm2 w=2 l=0.4 mult=6
.end
