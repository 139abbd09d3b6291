/* test_metrics: thermal voltage, the Enz-Vittoz gm/ID(IC) relation and its inverse, the square law,
 * sign normalization (the eight b_signs rows measured with ngspice 39) and the figures of a level-1
 * device against closed-form values and, when ngspice is installed, against ngspice itself. Every
 * expected number names its source beside the check. Records and devices are built by hand. */
#include "testutil.h"

#include "metrics.h"

#define PI 3.14159265358979323846

/* A record with every value absent; its values live in v, OPQ_COUNT doubles of the caller's. */
static OpRecord blank(double *v, OpFamily fam)
{
    OpRecord r;
    memset(&r, 0, sizeof r);
    r.q = v;
    r.family = fam;
    for (int q = 0; q < OPQ_COUNT; q++)
        r.q[q] = NAN;
    return r;
}

static Device dev(MosType t, double w, double l, double m)
{
    Device d;
    memset(&d, 0, sizeof d);
    d.name = "m1";
    d.model = "n1";
    d.type = t;
    d.w = w;
    d.l = l;
    d.m = m;
    d.nf = 1;
    return d;
}

/* Boundaries used where a test needs some: common practice, no source (the defaults' values). */
static const Bands practice = {12.0, 20.0, 1e-10};

/* ---- thermal voltage ---- */

static void test_ut(void **state)
{
    (void)state;
    /* k = 1.380649e-23 J/K and q = 1.602176634e-19 C are exact (BIPM, The International System of
       Units, 9th ed., 2019); kT/q at 300 K = 0.0258519998 V, at 300.15 K = 0.0258649258 V (computed
       from those constants, check-values.md section 1). */
    assert_close(fig_ut(300.0 - 273.15), 0.0258519998, 1e-9);
    assert_close(fig_ut(27.0), 0.0258649258, 1e-9);
    assert_close(1.0 / fig_ut(26.85), 38.682, 2e-5);
    assert_close(1.0 / fig_ut(27.0), 38.662, 2e-5);
    /* ngspice 39 uses CODATA 2014 constants (1.38064852e-23, 1.6021766208e-19) at 27 C and prints
       kT/q = 0.0258649 V: within 3e-7 of the exact value (ngspice-op-data.md section 7). */
    assert_close(fig_ut(27.0), 1.38064852e-23 * 300.15 / 1.6021766208e-19, 5e-7);
}

/* ---- weak-inversion limit gm/ID = 1/(n UT) ---- */

static const struct {
    double n, at300, at30015;
} weak_rows[] = {
    /* Tsividis & McAndrew, Operation and Modeling of the MOS Transistor, 3rd ed., 2011, weak-inversion
       chapter (from memory); values computed in check-values.md section 2 */
    {1.0, 38.682, 38.662}, {1.2, 32.235, 32.219}, {1.3, 29.755, 29.740},
    {1.4, 27.630, 27.616}, {1.5, 25.788, 25.775},
};

static void test_weak_limit(void **state)
{
    (void)state;
    double u300 = fig_ut(26.85), u30015 = fig_ut(27.0);
    for (size_t i = 0; i < sizeof weak_rows / sizeof weak_rows[0]; i++) {
        /* IC -> 0 is the weak-inversion limit of the Enz-Vittoz relation */
        assert_close(fig_gmid_from_ic(0.0, weak_rows[i].n, u300), weak_rows[i].at300, 2e-5);
        assert_close(fig_gmid_from_ic(0.0, weak_rows[i].n, u30015), weak_rows[i].at30015, 2e-5);
        assert_close(fig_gmid_from_ic(1e-9, weak_rows[i].n, u300), 1.0 / (weak_rows[i].n * u300), 1e-8);
    }
}

/* ---- g(IC) = (gm/ID) n UT ---- */

static const struct {
    double ic, g;
} g_rows[] = {
    /* Enz & Vittoz, Charge-based MOS Transistor Modeling (EKV), Wiley 2006: g = 2/(1+sqrt(1+4 IC));
       identical to Binkley, Tradeoffs and Optimization in Analog CMOS Design, Wiley 2008, ch. 3:
       g = 1/(sqrt(IC+0.25)+0.5) (both from memory); table values check-values.md section 4 */
    {0.01, 0.99020}, {0.1, 0.91608}, {1.0, 0.61803}, {10.0, 0.27016}, {100.0, 0.095125},
};

static void test_g_of_ic(void **state)
{
    (void)state;
    double n = 1.3, ut = fig_ut(26.85);
    for (size_t i = 0; i < sizeof g_rows / sizeof g_rows[0]; i++) {
        double g = fig_gmid_from_ic(g_rows[i].ic, n, ut) * n * ut;
        assert_close(g, g_rows[i].g, 5e-5);
        /* the Binkley form gives the same function */
        assert_close(g, 1.0 / (sqrt(g_rows[i].ic + 0.25) + 0.5), 1e-13);
    }
    /* IC = 1: exactly (sqrt(5)-1)/2 */
    assert_close(fig_gmid_from_ic(1.0, n, ut) * n * ut, (sqrt(5.0) - 1.0) / 2.0, 1e-14);
    /* gm/ID in 1/V, n = 1.3 at 300 K (check-values.md section 4 table): 29.463, 27.258, 18.390, 8.0386, 2.8305 */
    static const double gmid[] = {29.463, 27.258, 18.390, 8.0386, 2.8305};
    for (size_t i = 0; i < 5; i++)
        assert_close(fig_gmid_from_ic(g_rows[i].ic, n, ut), gmid[i], 5e-5);
    /* strong-inversion asymptote g -> 1/sqrt(IC) (Enz & Vittoz 2006): within 1 % at IC = 1e4 */
    assert_close(fig_gmid_from_ic(1e4, n, ut) * n * ut, 1.0 / sqrt(1e4), 1e-2);
}

static void test_ic_of_g(void **state)
{
    (void)state;
    double n = 1.3, ut = fig_ut(26.85);
    /* inverse IC = (1-g)/g^2, exact (derived in check-values.md section 4): g = 0.61803 -> 1.0000 */
    assert_close(fig_ic_from_gmid(0.61803 / (n * ut), n, ut), 1.0, 1e-4);
    /* n = 1.3, 300 K: 12 /V -> 3.6688, 18 /V -> 1.0796, 25 /V -> 0.22639 (check-values.md section 4) */
    assert_close(fig_ic_from_gmid(12.0, n, ut), 3.6688, 3e-5);
    assert_close(fig_ic_from_gmid(18.0, n, ut), 1.0796, 5e-5);
    assert_close(fig_ic_from_gmid(25.0, n, ut), 0.22639, 5e-5);
    /* round trip over six decades */
    for (double ic = 1e-3; ic < 1e3; ic *= 3.7)
        assert_close(fig_ic_from_gmid(fig_gmid_from_ic(ic, n, ut), n, ut), ic, 1e-9);
    /* outside the relation: at or above 1/(n UT), zero, negative, NaN, bad n or UT */
    assert_true(isnan(fig_ic_from_gmid(1.0001 / (n * ut), n, ut)));
    assert_true(fig_ic_from_gmid(0.9999 / (n * ut), n, ut) < 1e-3); /* IC -> 0 at the weak limit */
    assert_true(isnan(fig_ic_from_gmid(40.0, n, ut)));
    assert_true(isnan(fig_ic_from_gmid(0.0, n, ut)));
    assert_true(isnan(fig_ic_from_gmid(-5.0, n, ut)));
    assert_true(isnan(fig_ic_from_gmid(NAN, n, ut)));
    assert_true(isnan(fig_ic_from_gmid(10.0, 0.0, ut)));
    assert_true(isnan(fig_ic_from_gmid(10.0, n, 0.0)));
    assert_true(isnan(fig_gmid_from_ic(-1.0, n, ut)));
    assert_true(isnan(fig_gmid_from_ic(NAN, n, ut)));
    assert_true(isnan(fig_gmid_from_ic(1.0, -1.3, ut)));
    /* EKV strong-inversion link IC = (VOV/(2 n UT))^2: VOV = 0.2 V, n = 1.3, 300 K -> 8.8537
       (Enz & Vittoz 2006, check-values.md section 3); 2/(1+sqrt(1+4 IC)) approaches it only slowly,
       so only the number itself is checked here */
    double vov = 0.2;
    assert_close(pow(vov / (2 * n * ut), 2), 8.8537, 5e-5);
}

/* ---- square law: gm/ID = 2/VOV ---- */

static void test_square_law(void **state)
{
    (void)state;
    /* Razavi, Design of Analog CMOS Integrated Circuits, 2nd ed., 2017, ch. 2 (from memory):
       ID = 1/2 uCox (W/L) VOV^2, gm = sqrt(2 uCox (W/L) ID) = 2 ID/VOV. uCox = 200 uA/V^2, W/L = 10,
       ID = 100 uA -> gm = 632.46 uS, VOV = 0.31623 V, gm/ID = 6.3246 /V (check-values.md section 5). */
    double ucox = 200e-6, wl = 10, id = 100e-6;
    double gm = sqrt(2 * ucox * wl * id), vov = sqrt(2 * id / (ucox * wl));
    assert_close(gm, 6.3246e-4, 2e-5);
    assert_close(vov, 0.31623, 2e-5);
    double rv[OPQ_COUNT];
    OpRecord r = blank(rv, OPFAM_UNKNOWN);
    r.q[OPQ_ID] = id;
    r.q[OPQ_GM] = gm;
    r.q[OPQ_VGS] = 0.5 + vov;
    r.q[OPQ_VTH] = 0.5;
    r.q[OPQ_VDS] = 1.0;
    r.q[OPQ_VDSAT] = vov; /* square law: VDSAT = VOV */
    Device d = dev(MOS_NMOS, 10e-6, 1e-6, 1);
    Figures f;
    fig_normalize(&r, d.type, &f);
    fig_derive(&f, &d, &practice);
    assert_close(f.vov, vov, 1e-12);
    assert_close(f.gm_id, 2.0 / f.vov, 1e-12);
    assert_close(f.gm_id, 6.3246, 2e-5);
    assert_int_equal(f.region, REGION_STRONG); /* 6.3 /V < 12 /V */
}

/* ---- sign normalization: ngspice-op-data.md section 4, deck b_signs.cir ---- */

typedef struct {
    const char *what;
    OpFamily fam;
    MosType type;
    double id, vgs, vds, vbs, vth, von, vdsat;  /* as ngspice 39 printed them */
    double e_id, e_vgs, e_vds, e_vth, e_vdsat;  /* effective values */
    int swapped;
} SignRow;

static const SignRow sign_rows[] = {
    /* BSIM4 N normal/swapped: id 2.11869e-4 both; vgs 0.8 / -0.4; vds 1.2 / -1.2; vth 0.340571; vdsat 0.292834 */
    {"BSIM4 N normal", OPFAM_BSIM, MOS_NMOS, 2.11869e-4, 0.8, 1.2, 0, 0.340571, NAN, 0.292834,
     2.11869e-4, 0.8, 1.2, 0.340571, 0.292834, 0},
    {"BSIM4 N swapped", OPFAM_BSIM, MOS_NMOS, 2.11869e-4, -0.4, -1.2, -1.2, 0.340571, NAN, 0.292834,
     2.11869e-4, 0.8, 1.2, 0.340571, 0.292834, 1},
    /* BSIM4 P: id +2.07981e-4, vgs +0.8 / -0.2, vds +1 / -1, vbs -0 / -1, vth +0.328308, vdsat +0.387455 */
    {"BSIM4 P normal", OPFAM_BSIM, MOS_PMOS, 2.07981e-4, 0.8, 1.0, -0.0, 0.328308, NAN, 0.387455,
     2.07981e-4, 0.8, 1.0, 0.328308, 0.387455, 0},
    {"BSIM4 P swapped", OPFAM_BSIM, MOS_PMOS, 2.07981e-4, -0.2, -1.0, -1.0, 0.328308, NAN, 0.387455,
     2.07981e-4, 0.8, 1.0, 0.328308, 0.387455, 1},
    /* Mos1 N: id +1.008e-5 / -1.008e-5 (type x I_in), von 0.5, vdsat 0.3 */
    {"Mos1 N normal", OPFAM_MOS1, MOS_NMOS, 1.008e-5, 0.8, 1.2, 0, NAN, 0.5, 0.3,
     1.008e-5, 0.8, 1.2, 0.5, 0.3, 0},
    {"Mos1 N swapped", OPFAM_MOS1, MOS_NMOS, -1.008e-5, -0.4, -1.2, -1.2, NAN, 0.5, 0.3,
     1.008e-5, 0.8, 1.2, 0.5, 0.3, 1},
    /* Mos1 P: id +7.92e-6 / -7.92e-6, von -0.5, vdsat -0.3 (type-signed) */
    {"Mos1 P normal", OPFAM_MOS1, MOS_PMOS, 7.92e-6, 0.8, 1.0, -0.0, NAN, -0.5, -0.3,
     7.92e-6, 0.8, 1.0, 0.5, 0.3, 0},
    {"Mos1 P swapped", OPFAM_MOS1, MOS_PMOS, -7.92e-6, -0.2, -1.0, -1.0, NAN, -0.5, -0.3,
     7.92e-6, 0.8, 1.0, 0.5, 0.3, 1},
};

static void check_sign_row(const SignRow *s, OpFamily fam)
{
    double rv[OPQ_COUNT];
    OpRecord r = blank(rv, fam);
    r.q[OPQ_ID] = s->id;
    r.q[OPQ_VGS] = s->vgs;
    r.q[OPQ_VDS] = s->vds;
    r.q[OPQ_VBS] = s->vbs;
    r.q[OPQ_VTH] = s->vth;
    r.q[OPQ_VON] = s->von;
    r.q[OPQ_VDSAT] = s->vdsat;
    r.q[OPQ_GM] = 1e-4;
    r.q[OPQ_GDS] = 1e-6;
    Figures f;
    fig_normalize(&r, s->type, &f);
    print_message("  %s (family %d)\n", s->what, (int)fam);
    assert_close(f.id, s->e_id, 1e-12);
    assert_close(f.vgs, s->e_vgs, 1e-12);
    assert_close(f.vds, s->e_vds, 1e-12);
    assert_close(f.vth, s->e_vth, 1e-12);
    assert_close(f.vdsat, s->e_vdsat, 1e-12);
    assert_int_equal(f.swapped, s->swapped);
    /* in every row the real source is at the bulk: VSB = 0, and never -0 */
    assert_true(f.vsb == 0.0 && !signbit(f.vsb));
    Device d = dev(s->type, 1e-6, 1e-6, 1);
    fig_derive(&f, &d, &practice);
    assert_close(f.margin, s->e_vds - s->e_vdsat, 1e-12);
    assert_close(f.vov, s->e_vgs - s->e_vth, 1e-12);
}

static void test_signs(void **state)
{
    (void)state;
    for (size_t i = 0; i < sizeof sign_rows / sizeof sign_rows[0]; i++)
        check_sign_row(&sign_rows[i], sign_rows[i].fam);
}

/* A dump that does not say which family printed it: magnitudes for id and vdsat, and a negative
   PMOS threshold flipped. The same eight rows must come out the same. */
static void test_signs_unknown_family(void **state)
{
    (void)state;
    for (size_t i = 0; i < sizeof sign_rows / sizeof sign_rows[0]; i++)
        check_sign_row(&sign_rows[i], OPFAM_UNKNOWN);
}

static void test_signs_body(void **state)
{
    (void)state;
    /* NMOS with its source 0.3 V above the bulk, written swapped: pins D=0.3+1.2 ... vbs measured from
       the written source (the real drain) is -1.5, vds -1.2: real vbs = -1.5 - (-1.2) = -0.3 (recipe,
       ngspice-op-data.md section 4), so VSB = 0.3 */
    double rv[OPQ_COUNT];
    OpRecord r = blank(rv, OPFAM_BSIM);
    r.q[OPQ_VGS] = -0.4;
    r.q[OPQ_VDS] = -1.2;
    r.q[OPQ_VBS] = -1.5;
    Figures f;
    fig_normalize(&r, MOS_NMOS, &f);
    assert_close(f.vsb, 0.3, 1e-12);
    assert_close(f.vgs, 0.8, 1e-12);
    /* no record at all: everything absent */
    fig_normalize(NULL, MOS_NMOS, &f);
    assert_true(isnan(f.id) && isnan(f.gm) && isnan(f.vgs) && isnan(f.cgg) && isnan(f.margin));
    assert_int_equal(f.region, REGION_UNKNOWN);
    assert_false(f.swapped);
}

/* ---- Cgg ---- */

static void test_cgg(void **state)
{
    (void)state;
    Figures f;
    /* BSIM4 cgs/cgd/cgb are dQg/dVx, negative: Cgg = -(cgs+cgd+cgb) (ngspice-op-data.md section 1) */
    double rv[OPQ_COUNT];
    OpRecord r = blank(rv, OPFAM_BSIM);
    r.q[OPQ_CGS] = -1.32984e-15;
    r.q[OPQ_CGD] = -0.2e-15;
    r.q[OPQ_CGB] = -0.1e-15;
    fig_normalize(&r, MOS_NMOS, &f);
    assert_close(f.cgg, 1.62984e-15, 1e-12);
    assert_true(f.cgg_summed);
    /* a cgg in the dump wins and is not marked summed */
    r.q[OPQ_CGG] = 1.64886e-15;
    fig_normalize(&r, MOS_NMOS, &f);
    assert_close(f.cgg, 1.64886e-15, 1e-12);
    assert_false(f.cgg_summed);
    /* a partial sum would overstate fT: absent instead */
    double pv[OPQ_COUNT];
    OpRecord p = blank(pv, OPFAM_MOS1);
    p.q[OPQ_CGS] = 4.6e-15;
    p.q[OPQ_GM] = 1e-4;
    fig_normalize(&p, MOS_NMOS, &f);
    assert_true(isnan(f.cgg));
    Device d = dev(MOS_NMOS, 1e-6, 1e-6, 1);
    fig_derive(&f, &d, &practice);
    assert_true(isnan(f.ft));
}

static void test_overlap(void **state)
{
    (void)state;
    Model bsim = {.name = "nch", .type = MOS_NMOS, .level = 14, .cgso = 1e-9, .cgdo = 2e-9, .cgbo = NAN};
    Model mos1 = {.name = "n1", .type = MOS_NMOS, .level = 1, .cgso = 1e-9, .cgdo = 1e-9, .cgbo = NAN};
    Model bare = {.name = "nx", .type = MOS_NMOS, .level = 54, .cgso = NAN, .cgdo = NAN, .cgbo = NAN};
    double rv[OPQ_COUNT];
    OpRecord r = blank(rv, OPFAM_BSIM);
    r.q[OPQ_GM] = 6.6e-5;
    r.q[OPQ_CGG] = 1.64886e-15;
    Device d = dev(MOS_NMOS, 1e-6, 0.2e-6, 4);
    Figures f;
    /* (cgso+cgdo)*W*m = 3e-9 * 1e-6 * 4 = 1.2e-14 F */
    d.mdl = &bsim;
    fig_normalize(&r, MOS_NMOS, &f);
    fig_derive(&f, &d, &practice);
    assert_true(fig_add_overlap(&f, &d));
    assert_true(f.cgg_overlap);
    assert_close(f.cgg, 1.64886e-15 + 1.2e-14, 1e-12);
    assert_close(f.ft, 6.6e-5 / (2 * PI * f.cgg), 1e-12);
    assert_false(fig_add_overlap(&f, &d)); /* never twice */
    /* cgbo*L*m joins in when the card gives it */
    bsim.cgbo = 5e-10;
    fig_normalize(&r, MOS_NMOS, &f);
    assert_true(fig_add_overlap(&f, &d));
    assert_close(f.cgg, 1.64886e-15 + 1.2e-14 + 5e-10 * 0.2e-6 * 4, 1e-12);
    /* level 1 Meyer capacitances already hold the overlap (g_overlap.cir: cgs grew by cgso*W) */
    d.mdl = &mos1;
    fig_normalize(&r, MOS_NMOS, &f);
    assert_false(fig_add_overlap(&f, &d));
    assert_close(f.cgg, 1.64886e-15, 1e-12);
    /* no overlap values on the card, or no model: nothing added */
    d.mdl = &bare;
    assert_false(fig_add_overlap(&f, &d));
    d.mdl = NULL;
    assert_false(fig_add_overlap(&f, &d));
    assert_false(f.cgg_overlap);
}

/* ---- level-1 cross-check (c_mult.cir device mb5, ngspice 39) ---- */

static void level1_record(OpRecord *r, double *v, double m)
{
    *r = blank(v, OPFAM_MOS1);
    /* ngspice printed: id 9.9e-06, gm 6.6e-05, gds 9e-07, vdsat 0.3, von 0.5, cgs 4.60419e-15, cgd 0,
       cgb 0 (check-values.md sections 5-6); totals scale with m (ngspice-op-data.md section 5) */
    r->q[OPQ_ID] = 9.9e-6 * m;
    r->q[OPQ_GM] = 6.6e-5 * m;
    r->q[OPQ_GDS] = 9e-7 * m;
    r->q[OPQ_VGS] = 0.8;
    r->q[OPQ_VDS] = 1.0;
    r->q[OPQ_VBS] = 0.0;
    r->q[OPQ_VON] = 0.5;
    r->q[OPQ_VDSAT] = 0.3;
    r->q[OPQ_CGS] = 4.60419e-15 * m;
    r->q[OPQ_CGD] = 0.0;
    r->q[OPQ_CGB] = 0.0;
}

static void test_level1(void **state)
{
    (void)state;
    for (int m = 1; m <= 4; m += 3) {
        OpRecord r;
        double rv[OPQ_COUNT];
        level1_record(&r, rv, m);
        Device d = dev(MOS_NMOS, 1e-6, 1e-6, m);
        Figures f;
        fig_normalize(&r, d.type, &f);
        fig_derive(&f, &d, &practice);
        /* Shichman-Hodges level 1 (IEEE JSSC SC-3(3), 1968; ngspice manual): gm/ID = 2/VOV = 2/0.3 */
        assert_close(f.gm_id, 6.6667, 1e-4);
        assert_close(f.gm_id, 2.0 / 0.3, 1e-12);
        /* gm/gds = 2(1+lambda VDS)/(lambda VOV) = 2*1.1/(0.1*0.3) = 73.333 (check-values.md section 7) */
        assert_close(f.gain, 73.333, 1e-4);
        assert_close(f.gain, 2 * 1.1 / (0.1 * 0.3), 1e-12);
        /* margin VDS - VDSAT = 1 - 0.3 */
        assert_close(f.margin, 0.7, 1e-12);
        assert_close(f.vov, 0.3, 1e-12);
        /* fT = gm/(2 pi Cgg) with Cgg = cgs+cgd+cgb = 4.60419e-15: 2.2814 GHz (check-values.md section 6) */
        assert_true(f.cgg_summed);
        assert_close(f.ft, 2.2814e9, 5e-5);
        /* ID/(W*m) = 9.9 A/m whatever m is; region strong (6.67 /V < 12 /V, common practice) */
        assert_close(f.id_w, 9.9, 1e-12);
        assert_int_equal(f.region, REGION_STRONG);
    }
}

/* ---- region ---- */

typedef struct {
    const char *what;
    double id, gm, vds, vdsat;
    Region want;
} RegionRow;

static const RegionRow region_rows[] = {
    /* boundaries: common practice, no source (12 /V, 20 /V, 1e-10 A per square); W = L = 1u */
    {"strong 6 /V", 1e-4, 6e-4, 1.0, 0.3, REGION_STRONG},
    {"moderate 15 /V", 1e-5, 1.5e-4, 1.0, 0.1, REGION_MODERATE},
    {"moderate at 12 /V exactly", 0.25, 3.0, 1.0, 0.1, REGION_MODERATE},
    {"moderate at 20 /V exactly", 0.5, 10.0, 1.0, 0.05, REGION_MODERATE},
    {"weak 25 /V", 1e-7, 2.5e-6, 1.0, 0.05, REGION_WEAK},
    {"triode", 1e-4, 6e-4, 0.1, 0.3, REGION_TRIODE},
    {"off by density", 1e-12, 3e-11, 1.0, 0.05, REGION_OFF},
    {"off at zero current", 0.0, 0.0, 1.0, 0.05, REGION_OFF},
    {"off wins over triode", 1e-12, 3e-11, 0.01, 0.05, REGION_OFF},
    {"just above off", 1.01e-10, 2.5e-9, 1.0, 0.05, REGION_WEAK},
    {"no id", NAN, 6e-4, 1.0, 0.3, REGION_UNKNOWN},
    {"no vdsat: saturation unknown", 1e-4, 6e-4, 1.0, NAN, REGION_UNKNOWN},
    {"no gm", 1e-4, NAN, 1.0, 0.3, REGION_UNKNOWN},
    {"negative gm is not a region", 1e-4, -6e-4, 1.0, 0.3, REGION_UNKNOWN},
    {"triode needs no gm", 1e-4, NAN, 0.1, 0.3, REGION_TRIODE},
};

static void test_region(void **state)
{
    (void)state;
    for (size_t i = 0; i < sizeof region_rows / sizeof region_rows[0]; i++) {
        const RegionRow *t = &region_rows[i];
        double rv[OPQ_COUNT];
        OpRecord r = blank(rv, OPFAM_BSIM);
        r.q[OPQ_ID] = t->id;
        r.q[OPQ_GM] = t->gm;
        r.q[OPQ_VDS] = t->vds;
        r.q[OPQ_VDSAT] = t->vdsat;
        Device d = dev(MOS_NMOS, 1e-6, 1e-6, 1);
        Figures f;
        fig_normalize(&r, d.type, &f);
        fig_derive(&f, &d, &practice);
        print_message("  %s\n", t->what);
        assert_string_equal(fig_region_name[f.region], fig_region_name[t->want]);
    }
    /* density uses W*m: 4 copies of 1e-10 A at W = L = 1u are 1e-10 A per square each: not off */
    double rv[OPQ_COUNT];
    OpRecord r = blank(rv, OPFAM_BSIM);
    r.q[OPQ_ID] = 4.4e-10;
    r.q[OPQ_GM] = 1e-8;
    r.q[OPQ_VDS] = 1.0;
    r.q[OPQ_VDSAT] = 0.05;
    Device d = dev(MOS_NMOS, 1e-6, 1e-6, 4);
    Figures f;
    fig_normalize(&r, d.type, &f);
    fig_derive(&f, &d, &practice);
    assert_close(f.id_w, 4.4e-10 / 4e-6, 1e-12);
    assert_int_equal(f.region, REGION_WEAK);
    d.m = 5; /* 0.88e-10 per square */
    fig_derive(&f, &d, &practice);
    assert_int_equal(f.region, REGION_OFF);
    /* no bands: only what needs none */
    fig_derive(&f, &d, NULL);
    assert_int_equal(f.region, REGION_UNKNOWN);
}

static void test_no_division_by_zero(void **state)
{
    (void)state;
    double rv[OPQ_COUNT];
    OpRecord r = blank(rv, OPFAM_MOS1);
    /* an off level-1 device prints gm = gds = 0 (m_edge.cir); a saturated lambda=0 one gds 0 */
    r.q[OPQ_ID] = 0.0;
    r.q[OPQ_GM] = 0.0;
    r.q[OPQ_GDS] = 0.0;
    r.q[OPQ_CGS] = 0.0;
    r.q[OPQ_CGD] = 0.0;
    r.q[OPQ_CGB] = 0.0;
    Device d = dev(MOS_NMOS, 0.0, 0.0, 0.0);
    Figures f;
    fig_normalize(&r, d.type, &f);
    fig_derive(&f, &d, &practice);
    assert_true(isnan(f.gm_id));
    assert_true(isnan(f.gain));
    assert_true(isnan(f.ft));
    assert_true(isnan(f.id_w));
    assert_int_equal(f.region, REGION_OFF);
    r.q[OPQ_ID] = 1e-5;
    r.q[OPQ_GM] = 1e-4;
    fig_normalize(&r, d.type, &f);
    fig_derive(&f, NULL, &practice);
    assert_close(f.gm_id, 10.0, 1e-12);
    assert_true(isnan(f.gain));
    assert_true(isnan(f.id_w));
}

/* ---- against ngspice itself ---- */

/* Reads "name = value" lines that ngspice's `print` writes; NaN when the name is not there. */
static double printed(const char *out, const char *name)
{
    size_t n = strlen(name);
    for (const char *p = out; (p = strstr(p, name)); p += n) {
        if ((p == out || p[-1] == '\n') && strncmp(p + n, " = ", 3) == 0)
            return strtod(p + n + 3, NULL);
    }
    return NAN;
}

static char *run_ngspice(const char *deck_name, const char *deck, size_t len)
{
    char *path = tu_tmpfile(deck_name, deck, len);
    assert_non_null(path);
    size_t cl = strlen(path) * 2 + 64;
    char *cmd = malloc(cl);
    assert_non_null(cmd);
    snprintf(cmd, cl, "ngspice -b '%s' > '%s.out' 2>/dev/null", path, path);
    int rc = system(cmd);
    free(cmd);
    assert_int_equal(rc, 0);
    size_t ol = strlen(path) + 8;
    char *opath = malloc(ol);
    assert_non_null(opath);
    snprintf(opath, ol, "%s.out", path);
    FILE *fp = fopen(opath, "rb");
    assert_non_null(fp);
    fseek(fp, 0, SEEK_END);
    long sz = ftell(fp);
    fseek(fp, 0, SEEK_SET);
    char *buf = calloc(1, (size_t)sz + 1);
    assert_non_null(buf);
    assert_int_equal(fread(buf, 1, (size_t)sz, fp), (size_t)sz);
    fclose(fp);
    free(opath);
    free(path);
    return buf;
}

/* The b_signs scenario (our own demo deck, invented sizes): four BSIM4 and four level-1 devices,
   normal and with drain and source swapped, each with its own drain ammeter. */
static const char signs_deck[] =
    "* biaslint test: signs, normal and swapped drain/source (invented sizes)\n"
    ".model nch nmos level=14 version=4.8\n"
    ".model pch pmos level=14 version=4.8\n"
    ".model n1 nmos level=1 vto=0.5 kp=200u lambda=0.1 tox=5n\n"
    ".model p1 pmos level=1 vto=-0.5 kp=80u lambda=0.1 tox=5n\n"
    "vdd vdd 0 dc 1.2\nvgn gn 0 dc 0.8\nvgp gp 0 dc 0.4\nvlo lo 0 dc 0.2\n"
    "va1 dd1 d1 0\nva2 dd2 d2 0\nva3 dd3 d3 0\nva4 dd4 d4 0\n"
    "va5 dd5 d5 0\nva6 dd6 d6 0\nva7 dd7 d7 0\nva8 dd8 d8 0\n"
    "m1 d1 gn 0 0 nch w=1u l=0.2u\nvd1 dd1 0 dc 1.2\n"
    "m2 d2 gn vdd 0 nch w=1u l=0.2u\nvd2 dd2 0 dc 0\n"
    "m3 d3 gp vdd vdd pch w=2u l=0.2u\nvd3 dd3 0 dc 0.2\n"
    "m4 d4 gp lo vdd pch w=2u l=0.2u\nvd4 dd4 0 dc 1.2\n"
    "m5 d5 gn 0 0 n1 w=1u l=1u\nvd5 dd5 0 dc 1.2\n"
    "m6 d6 gn vdd 0 n1 w=1u l=1u\nvd6 dd6 0 dc 0\n"
    "m7 d7 gp vdd vdd p1 w=2u l=1u\nvd7 dd7 0 dc 0.2\n"
    "m8 d8 gp lo vdd p1 w=2u l=1u\nvd8 dd8 0 dc 1.2\n"
    ".control\nset numdgt=12\nop\n"
    "print i(va1) i(va2) i(va3) i(va4) i(va5) i(va6) i(va7) i(va8)\n"
    "print @m1[id] @m2[id] @m3[id] @m4[id] @m5[id] @m6[id] @m7[id] @m8[id]\n"
    "print @m1[vgs] @m2[vgs] @m3[vgs] @m4[vgs] @m5[vgs] @m6[vgs] @m7[vgs] @m8[vgs]\n"
    "print @m1[vds] @m2[vds] @m3[vds] @m4[vds] @m5[vds] @m6[vds] @m7[vds] @m8[vds]\n"
    "print @m1[vbs] @m2[vbs] @m3[vbs] @m4[vbs] @m5[vbs] @m6[vbs] @m7[vbs] @m8[vbs]\n"
    "print @m1[vth] @m2[vth] @m3[vth] @m4[vth] @m5[von] @m6[von] @m7[von] @m8[von]\n"
    "print @m1[vdsat] @m2[vdsat] @m3[vdsat] @m4[vdsat] @m5[vdsat] @m6[vdsat] @m7[vdsat] @m8[vdsat]\n"
    "quit\n.endc\n.end\n";

static void test_signs_ngspice(void **state)
{
    (void)state;
    if (!tu_have_ngspice())
        skip();
    char *out = run_ngspice("signs.cir", signs_deck, sizeof signs_deck - 1);
    Figures f[9];
    for (int k = 1; k <= 8; k++) {
        char nm[32];
        double rv[OPQ_COUNT];
        OpRecord r = blank(rv, k <= 4 ? OPFAM_BSIM : OPFAM_MOS1);
        static const char *const qn[] = {"id", "vgs", "vds", "vbs", "vdsat"};
        static const OpQty qq[] = {OPQ_ID, OPQ_VGS, OPQ_VDS, OPQ_VBS, OPQ_VDSAT};
        for (int q = 0; q < 5; q++) {
            snprintf(nm, sizeof nm, "@m%d[%s]", k, qn[q]);
            r.q[qq[q]] = printed(out, nm);
            assert_false(isnan(r.q[qq[q]]));
        }
        snprintf(nm, sizeof nm, k <= 4 ? "@m%d[vth]" : "@m%d[von]", k);
        r.q[k <= 4 ? OPQ_VTH : OPQ_VON] = printed(out, nm);
        MosType ty = (k == 3 || k == 4 || k == 7 || k == 8) ? MOS_PMOS : MOS_NMOS;
        fig_normalize(&r, ty, &f[k]);
        /* the drain current measured by the device's own ammeter, as a magnitude */
        snprintf(nm, sizeof nm, "i(va%d)", k);
        double iin = printed(out, nm);
        assert_false(isnan(iin));
        print_message("  m%d: id %.6g (ammeter %.6g), vgs %.4g, vds %.4g, vth %.6g, vdsat %.6g\n", k, f[k].id, iin,
                      f[k].vgs, f[k].vds, f[k].vth, f[k].vdsat);
        assert_close(f[k].id, fabs(iin), 1e-5);
        /* the bias in the deck: |VGS| = 0.8 V from the real source, |VDS| 1.2 V (N) or 1.0 V (P), VSB 0 */
        assert_close(f[k].vgs, 0.8, 1e-9);
        assert_close(f[k].vds, ty == MOS_NMOS ? 1.2 : 1.0, 1e-9);
        assert_true(fabs(f[k].vsb) < 1e-9);
        assert_int_equal(f[k].swapped, k % 2 == 0);
        assert_true(f[k].vth > 0 && f[k].vdsat > 0);
    }
    /* swapped devices are the same devices: same threshold and VDSAT as their normal twins */
    for (int k = 1; k <= 7; k += 2) {
        assert_close(f[k].vth, f[k + 1].vth, 1e-9);
        assert_close(f[k].vdsat, f[k + 1].vdsat, 1e-9);
    }
    /* level 1: VTH = |VTO| = 0.5, VDSAT = VOV = 0.3 (Shichman-Hodges, body at source) */
    for (int k = 5; k <= 8; k++) {
        assert_close(f[k].vth, 0.5, 1e-9);
        assert_close(f[k].vdsat, 0.3, 1e-9);
    }
    free(out);
}

static const char level1_deck[] =
    "* biaslint test: one level-1 NMOS, KP=200u W=L=1u VTO=0.5 lambda=0.1, VGS=0.8 VDS=1 (invented)\n"
    ".model n1 nmos level=1 vto=0.5 kp=200u lambda=0.1 tox=5n\n"
    "vd d 0 dc 1.0\nvg g 0 dc 0.8\n"
    "m1 d g 0 0 n1 w=1u l=1u\n"
    ".control\nset numdgt=12\nop\n"
    "print @m1[id] @m1[gm] @m1[gds] @m1[vgs] @m1[vds] @m1[vbs] @m1[von] @m1[vdsat] @m1[cgs] @m1[cgd] @m1[cgb]\n"
    "quit\n.endc\n.end\n";

static void test_level1_ngspice(void **state)
{
    (void)state;
    if (!tu_have_ngspice())
        skip();
    char *out = run_ngspice("level1.cir", level1_deck, sizeof level1_deck - 1);
    double rv[OPQ_COUNT];
    OpRecord r = blank(rv, OPFAM_MOS1);
    static const char *const qn[] = {"id", "gm", "gds", "vgs", "vds", "vbs", "von", "vdsat", "cgs", "cgd", "cgb"};
    static const OpQty qq[] = {OPQ_ID, OPQ_GM, OPQ_GDS, OPQ_VGS, OPQ_VDS, OPQ_VBS,
                               OPQ_VON, OPQ_VDSAT, OPQ_CGS, OPQ_CGD, OPQ_CGB};
    for (int q = 0; q < 11; q++) {
        char nm[32];
        snprintf(nm, sizeof nm, "@m1[%s]", qn[q]);
        r.q[qq[q]] = printed(out, nm);
        assert_false(isnan(r.q[qq[q]]));
    }
    Device d = dev(MOS_NMOS, 1e-6, 1e-6, 1);
    Figures f;
    fig_normalize(&r, d.type, &f);
    fig_derive(&f, &d, &practice);
    /* closed forms of level 1 (Shichman & Hodges 1968): ID = KP/2 (W/L) VOV^2 (1+lambda VDS) = 9.9 uA,
       gm/ID = 2/VOV, gm/gds = 2(1+lambda VDS)/(lambda VOV), VDSAT = VOV */
    double kp = 200e-6, vov = 0.3, lam = 0.1, vds = 1.0;
    /* Mos1 id includes the drain-bulk junction current (about 1e-12 A here, ngspice-op-data.md
       section 4), hence 1e-6 */
    assert_close(f.id, kp / 2 * vov * vov * (1 + lam * vds), 1e-6);
    assert_close(f.gm_id, 2 / vov, 1e-6);
    assert_close(f.gain, 2 * (1 + lam * vds) / (lam * vov), 1e-9);
    assert_close(f.margin, vds - vov, 1e-9);
    /* fT with Cgs = 2/3 Cox W L, Cox = 3.9 eps0/tox (Meyer; eps0 = 8.8541878128e-12 F/m, CODATA 2018):
       ngspice's SiO2 permittivity is 3.9*eps0 with its own eps0, so allow 1e-4 */
    double cox = 3.9 * 8.8541878128e-12 / 5e-9;
    double cgs = 2.0 / 3.0 * cox * 1e-6 * 1e-6;
    assert_close(f.cgg, cgs, 1e-4);
    assert_close(f.ft, kp * vov * (1 + lam * vds) / (2 * PI * cgs), 1e-4);
    free(out);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_ut),
        cmocka_unit_test(test_weak_limit),
        cmocka_unit_test(test_g_of_ic),
        cmocka_unit_test(test_ic_of_g),
        cmocka_unit_test(test_square_law),
        cmocka_unit_test(test_signs),
        cmocka_unit_test(test_signs_unknown_family),
        cmocka_unit_test(test_signs_body),
        cmocka_unit_test(test_cgg),
        cmocka_unit_test(test_overlap),
        cmocka_unit_test(test_level1),
        cmocka_unit_test(test_region),
        cmocka_unit_test(test_no_division_by_zero),
        cmocka_unit_test(test_signs_ngspice),
        cmocka_unit_test(test_level1_ngspice),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
