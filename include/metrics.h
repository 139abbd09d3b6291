/* metrics: the figures of merit of one MOSFET from its (normalized) operating point, and its
 * inversion region. Pure arithmetic. */
#ifndef METRICS_H
#define METRICS_H

#include <stdbool.h>

#include "design.h"
#include "opdump.h"

/* ORDER REGION */
typedef enum {
    REGION_UNKNOWN = 0, /* not enough data to tell */
    REGION_OFF,
    REGION_WEAK,
    REGION_MODERATE,
    REGION_STRONG,
    REGION_TRIODE,
    REGION_COUNT
} Region;

extern const char *const fig_region_name[REGION_COUNT]; /* "unknown","off","weak",... ORDER REGION */

/* Where the region boundaries lie for one device: data from rules/, never constants in C. */
typedef struct {
    double strong_below;  /* gm/ID (1/V) under which a saturated device is in strong inversion */
    double weak_above;    /* gm/ID (1/V) over which it is in weak inversion */
    double off_below;     /* ID*L/(W*m) (A) under which a device counts as off */
} Bands;

/* Normalized operating point (n-type convention, PMOS magnitudes, SI) and the figures derived from
 * it. NaN marks anything absent or undefined. */
typedef struct {
    double id, gm, gds, gmbs, vgs, vds, vsb, vth, vdsat, cgg;
    double gm_id;   /* gm/ID, 1/V */
    double id_w;    /* ID/(W*m), A/m: W as written (total over fingers), m copies */
    double gain;    /* gm/gds */
    double ft;      /* gm/(2*pi*Cgg), Hz */
    double vov;     /* VGS-VTH, V */
    double margin;  /* VDS-VDSAT, V */
    Region region;
    bool swapped;   /* the dump had VDS < 0: drain and source roles were swapped */
    bool cgg_summed;/* Cgg is |cgs+cgd+cgb| (no cgg in the dump) */
    bool cgg_overlap;/* the model card's overlap capacitance was added to Cgg */
} Figures;

/* Read r into f in the n-type convention for a device of the given type (ngspice-op-data.md sec. 4):
 * |id|; vth from vth, else von; BSIM vth/vdsat as printed, Mos1 ones times the type sign, unknown
 * family |vdsat| and a negative PMOS vth negated; cgg from cgg or |cgs+cgd+cgb| (all three needed);
 * vsb = -vbs; a record with vds < 0 is swapped back (vgs-vds, -vds, vbs-vds). All derived figures
 * are left NaN. r NULL (no data for the device): every figure NaN, region unknown. */
void fig_normalize(const OpRecord *r, MosType type, Figures *f);

/* Fill the derived figures and the region of f for device dv (for W, L, m); bands gives the
 * boundaries. Never divides by zero: a zero or absent denominator leaves the figure NaN. Region: off
 * when ID is 0 or ID*L/(W*m) < off_below; else triode when VDS-VDSAT < 0; else weak/moderate/strong
 * from gm/ID; unknown when ID, VDS-VDSAT or a positive gm/ID is missing (or bands is NULL). */
void fig_derive(Figures *f, const Device *dv, const Bands *bands);

/* Add the model's overlap capacitance (cgso+cgdo)*W*m + cgbo*L*m to f->cgg when both are known, and
 * recompute fT. Returns true when it added something. Needs cgso and cgdo on the card (cgbo is
 * added when given); never for Meyer-capacitance models (levels 1-3, 6), whose cgs/cgd hold the
 * overlap already, and never twice. */
bool fig_add_overlap(Figures *f, const Device *dv);

/* Thermal voltage kT/q in volts at temp_c degrees Celsius (exact SI k and q). */
double fig_ut(double temp_c);

/* Inversion coefficient from gm/ID with the Enz-Vittoz charge-based relation
 * gm/ID = (1/(n*UT)) * 2/(1+sqrt(1+4*IC)); NaN when gm/ID >= 1/(n*UT) or <= 0. */
double fig_ic_from_gmid(double gm_id, double n, double ut);
/* Its inverse. */
double fig_gmid_from_ic(double ic, double n, double ut);

#endif
