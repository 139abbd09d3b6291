* scale.sp: .option scale as ngspice 39 applies it (invented cells, BSIM4 defaults): it multiplies
* W and L written on M cards (and through cell parameters, w={w}), wherever the .option card
* stands (here inside a subcircuit); scale= on a .subckt line or an X card is a plain parameter.
.include models.inc
vdd vdd 0 1.2
vg g 0 0.7
.subckt cell d g s b w=1 l=1 nf=1 scale=3
.option scale=0.5u
mi d g s b nb4 w={w} l={l} nf={nf}
.ends cell
x1 vdd g 0 0 cell w=4 l=0.4 nf=2
x2 vdd g 0 0 cell w=2 l=0.6 scale=0.25
m3 vdd g 0 0 nb4 w=3 l=0.5
mp vdd g vdd vdd pb4 w=6 l=0.36 m=2
.end
