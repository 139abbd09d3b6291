* params.sp: parameter expressions and scoping (global, subckt defaults, instance values, .param in
* a subckt, a caller's parameter seen from inside, forward references, functions, ternary)
.include models.inc
.param late_w='early*2'
.param early=1u
.param lfac=3
.func dbl(x) {2*x}
.subckt leaf d g params: wl=1u
m1 d g 0 0 nb4 w={wl} l={lfac*0.1u}
m2 d g 0 0 nb4 w={max(wl,2u)} l={sqrt(0.04e-12)}
.ends leaf
.subckt mid d g params: wm=2u lfac=5
.param wl2={wm*1.5}
xa d g leaf wl={wl2}
xb d g leaf
m3 d g 0 0 nb4 w={dbl(wm)} l={lfac > 4 ? 0.5u : 0.25u}
.ends mid
vdd vdd 0 1.2
vg g 0 0.6
rd vdd d 20k
xm d g mid
xn d g mid wm=4u lfac=2
m4 d g 0 0 nb4 w={late_w} l={ln(exp(2))*0.1u}
m5 d g 0 0 nb4 w='int(2.7)*1u+abs(-1u)' l={pwr(-2,2)*0.1u}
m6 d g 0 0 nb4 w={10u*(1<2 && 2<3)} l={1 ? 0.3u : 0.9u}
.end
