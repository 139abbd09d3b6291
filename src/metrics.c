/* metrics: sign normalization of one operating-point record and the figures of merit derived from
 * it (gm/ID, ID/W, gm/gds, fT, VOV, VDS-VDSAT, region). Called by join for every matched row; pure
 * arithmetic, no allocation. The sign recipe is the one measured in ngspice-op-data.md, section 4. */
#include "metrics.h"

#include <math.h>

/* ORDER REGION */
const char *const fig_region_name[REGION_COUNT] = {
    "unknown", "off", "weak", "moderate", "strong", "triode",
};

/* Exact since the 2019 SI redefinition (BIPM SI brochure, 9th ed.). */
#define BOLTZMANN 1.380649e-23    /* J/K */
#define CHARGE    1.602176634e-19 /* C */
#define ZERO_C    273.15          /* K at 0 degrees Celsius */
#define TWO_PI    6.283185307179586

static int have(double v)
{
    return !isnan(v);
}

/* a/b, NaN when either is absent or b is zero: a figure that cannot be computed stays absent. */
static double ratio(double a, double b)
{
    if (!have(a) || !have(b) || b == 0.0)
        return NAN;
    double r = a / b;
    return isfinite(r) ? r : NAN;
}

static double positive_or_nan(double v)
{
    return isfinite(v) && v > 0.0 ? v : NAN;
}

static void all_absent(Figures *f)
{
    f->id = f->gm = f->gds = f->gmbs = f->vgs = f->vds = f->vsb = f->vth = f->vdsat = f->cgg = NAN;
    f->gm_id = f->id_w = f->gain = f->ft = f->vov = f->margin = NAN;
    f->region = REGION_UNKNOWN;
    f->swapped = f->cgg_summed = f->cgg_overlap = false;
}

void fig_normalize(const OpRecord *r, MosType type, Figures *f)
{
    if (!r) {
        all_absent(f);
        return;
    }
    double s = type == MOS_PMOS ? -1.0 : 1.0;
    const double *q = r->q;

    f->gm = q[OPQ_GM];
    f->gds = q[OPQ_GDS];
    f->gmbs = q[OPQ_GMBS];

    /* BSIM id is already positive when the channel conducts; Mos1 id is type x I_in and turns
       negative for a swapped device. The magnitude is the drain current in both cases. */
    f->id = have(q[OPQ_ID]) ? fabs(q[OPQ_ID]) : NAN;

    double vth = have(q[OPQ_VTH]) ? q[OPQ_VTH] : q[OPQ_VON];
    double vdsat = q[OPQ_VDSAT];
    switch (r->family) {
    case OPFAM_BSIM: /* vth, vdsat positive for both types, measured from the real source */
        break;
    case OPFAM_MOS1: /* von, vdsat carry the type sign */
        if (type != MOS_UNKNOWN) {
            vth = s * vth;
            vdsat = s * vdsat;
        } else {
            vdsat = fabs(vdsat);
        }
        break;
    default: /* the dump did not say: magnitudes where the physics says magnitude */
        vdsat = fabs(vdsat);
        if (type == MOS_PMOS && vth < 0.0)
            vth = -vth;
        break;
    }
    f->vth = vth;
    f->vdsat = vdsat;

    /* vgs, vds, vbs are type x (pin differences from the instance line's source pin) in every
       family; VDS < 0 means the pin written as source is really the drain. */
    double vgs = q[OPQ_VGS], vds = q[OPQ_VDS], vbs = q[OPQ_VBS];
    f->swapped = have(vds) && vds < 0.0;
    if (f->swapped) {
        vgs = vgs - vds;
        vbs = vbs - vds;
        vds = -vds;
    }
    f->vgs = vgs;
    f->vds = vds;
    f->vsb = 0.0 - vbs; /* 0.0 - x so that a printed "-0" gives +0 */

    f->cgg_summed = false;
    f->cgg_overlap = false;
    if (have(q[OPQ_CGG])) {
        f->cgg = fabs(q[OPQ_CGG]);
    } else if (have(q[OPQ_CGS]) && have(q[OPQ_CGD]) && have(q[OPQ_CGB])) {
        /* BSIM4 dQg/dVx terms are negative, Mos1 Meyer capacitances positive: the magnitude of the
           sum is Cgg either way. A partial sum would overstate fT, so all three are needed. */
        f->cgg = fabs(q[OPQ_CGS] + q[OPQ_CGD] + q[OPQ_CGB]);
        f->cgg_summed = true;
    } else {
        f->cgg = NAN;
    }

    f->gm_id = f->id_w = f->gain = f->ft = f->vov = f->margin = NAN;
    f->region = REGION_UNKNOWN;
}

static Region classify(const Figures *f, const Device *dv, const Bands *b)
{
    if (!have(f->id))
        return REGION_UNKNOWN;
    if (f->id == 0.0)
        return REGION_OFF;
    double l = dv ? positive_or_nan(dv->l) : NAN;
    double per_square = f->id_w * l; /* ID*L/(W*m) */
    if (b && have(per_square) && per_square < b->off_below)
        return REGION_OFF;
    if (have(f->margin) && f->margin < 0.0)
        return REGION_TRIODE;
    /* Inversion level is only read from a device known to be saturated with a sane gm/ID. */
    if (!b || !have(f->margin) || !isfinite(f->gm_id) || f->gm_id <= 0.0)
        return REGION_UNKNOWN;
    if (!have(b->strong_below) || !have(b->weak_above))
        return REGION_UNKNOWN;
    if (f->gm_id > b->weak_above)
        return REGION_WEAK;
    if (f->gm_id < b->strong_below)
        return REGION_STRONG;
    return REGION_MODERATE;
}

void fig_derive(Figures *f, const Device *dv, const Bands *bands)
{
    double w = dv ? positive_or_nan(dv->w) : NAN;
    double m = dv ? positive_or_nan(dv->m) : NAN;
    f->gm_id = ratio(f->gm, f->id);
    f->id_w = have(w) && have(m) ? ratio(f->id, w * m) : NAN;
    f->gain = ratio(f->gm, f->gds);
    f->ft = ratio(f->gm, TWO_PI * f->cgg);
    f->vov = have(f->vgs) && have(f->vth) ? f->vgs - f->vth : NAN;
    f->margin = have(f->vds) && have(f->vdsat) ? f->vds - f->vdsat : NAN;
    f->region = classify(f, dv, bands);
}

/* Meyer-capacitance models (levels 1-3, 6) put the overlap capacitance into cgs/cgd already. */
static int overlap_included(int level)
{
    return level == 1 || level == 2 || level == 3 || level == 6;
}

bool fig_add_overlap(Figures *f, const Device *dv)
{
    if (!dv || !dv->mdl || f->cgg_overlap || overlap_included(dv->mdl->level))
        return false;
    const Model *md = dv->mdl;
    double w = positive_or_nan(dv->w), l = positive_or_nan(dv->l), m = positive_or_nan(dv->m);
    if (!have(f->cgg) || !have(md->cgso) || !have(md->cgdo) || !have(w) || !have(m))
        return false;
    double add = (md->cgso + md->cgdo) * w * m;
    if (have(md->cgbo) && have(l))
        add += md->cgbo * l * m;
    if (!isfinite(add) || add < 0.0)
        return false;
    f->cgg += add;
    f->cgg_overlap = true;
    f->ft = ratio(f->gm, TWO_PI * f->cgg);
    return true;
}

double fig_ut(double temp_c)
{
    return BOLTZMANN * (temp_c + ZERO_C) / CHARGE;
}

double fig_ic_from_gmid(double gm_id, double n, double ut)
{
    if (!(n > 0.0) || !(ut > 0.0) || !isfinite(gm_id))
        return NAN;
    double g = gm_id * n * ut; /* normalized: 1 in weak inversion, 1/sqrt(IC) in strong */
    if (!(g > 0.0) || g >= 1.0)
        return NAN;
    return (1.0 - g) / (g * g); /* exact inverse of g = 2/(1+sqrt(1+4 IC)) */
}

double fig_gmid_from_ic(double ic, double n, double ut)
{
    if (!(n > 0.0) || !(ut > 0.0) || !(ic >= 0.0) || !isfinite(ic))
        return NAN;
    return 2.0 / (1.0 + sqrt(1.0 + 4.0 * ic)) / (n * ut);
}
