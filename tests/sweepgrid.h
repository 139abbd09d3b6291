/* sweepgrid: the small characterization grid of the sweep reader's seeds (tests/fuzz/seeds/sweep/,
 * ngspice's own output for it on the demo's models), shared by fuzz_sweep and test_characterize:
 * two lengths, VGS 0 to 0.2 V and VDS 0 to 0.1 V in 0.1 V steps, VSB 0. */
#ifndef SWEEPGRID_H
#define SWEEPGRID_H

#include <math.h>
#include <string.h>

#include "characterize.h"

static inline void sweep_grid(CharSpec *s)
{
    static const double l[] = {0.5e-6, 1e-6};
    memset(s, 0, sizeof *s);
    s->model = "seed";
    s->l = l;
    s->nl = 2;
    s->vgs = (CharRange){0, 0.2, 0.1};
    s->vds = (CharRange){0, 0.1, 0.1};
    s->vsb = (CharRange){0, 0, 0.1};
    s->temp_c = NAN;
    s->w_ref = 10e-6;
}

#endif
