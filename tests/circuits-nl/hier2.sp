* hier2.sp: a hierarchy two levels deep with parameters, nf inside, m on an X card of a cell without
* subcircuits. ngspice 39 does not multiply m through levels (it replaces it), so m stays off the
* cards inside subcircuits and off the X cards of cells that hold X cards.
.include models.inc
.param wunit=1u lmin=0.18u
.subckt pair da db g s b params: wp=2u nfp=1
m1 da g s b nb4 w={wp} l={lmin*2} nf={nfp}
m2 db g s b nb4 w={wp} l={lmin*2} nf={nfp}
.ends pair
.subckt stage in out vdd params: k=1
.param wtail={4*wunit*k}
xp out mid in tail 0 pair wp={2*wunit*k} nfp=2
mt tail in 0 0 nb4 w=wtail l=0.5u
ml out out vdd vdd pb4 w={3*wunit} l=lmin
mm mid mid vdd vdd pb4 w={3*wunit} l=lmin
.ends stage
vdd vdd 0 1.2
vin in 0 0.7
x1 in o1 vdd stage
x2 in o2 vdd stage k=2
x3 in o3 vdd stage k={1.5}
x4 o4 o4 in t4 0 pair wp=1u m=2
rt t4 0 10k
r4 vdd o4 10k
.end
