/* fuzz_lut: the characterization-table loader (lut_load), then what check and size ask of a table.
 * Promises checked: located errors (fuzz.h); a loaded table has strictly increasing axes of at
 * least one point and nodes = rows; interpolation never extrapolates (outside the grid: every value
 * NaN) and gives no infinity inside it; the inverse lookup returns a VGS inside the grid or NaN; a
 * table written with lut_write loads again with the same grid (the round trip characterize relies
 * on). */
#include "fuzz.h"

#include "lut.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t n);

FUZZ_IN_PRIVATE_DIR

static void write_file(const char *name, const void *p, size_t n)
{
    FILE *fp = fopen(name, "wb");
    if (!fp || (n && fwrite(p, 1, n, fp) != n) || fclose(fp) != 0)
        abort();
}

static void check_vals(const LutVals *v, unsigned outside)
{
    for (int q = 0; q < LUTQ_COUNT; q++) {
        if (outside && !isnan(v->q[q]))
            fuzz_fail("a point outside the grid got a value for quantity %d", q);
        if (isinf(v->q[q]))
            fuzz_fail("quantity %d is infinite", q);
    }
    if (isinf(v->gm_id) || isinf(v->id_w) || isinf(v->gain) || isinf(v->ft))
        fuzz_fail("a derived figure is infinite: gm/ID %g ID/W %g gain %g fT %g (id %g gm %g gds %g cgg %g)", v->gm_id,
                  v->id_w, v->gain, v->ft, v->q[LUTQ_ID], v->q[LUTQ_GM], v->q[LUTQ_GDS], v->q[LUTQ_CGG]);
}

static void exercise(const Lut *t)
{
    const LutInfo *in = lut_info(t);
    size_t nodes = 1;
    for (int a = 0; a < LUTAX_COUNT; a++) {
        if (in->n[a] < 1 || !in->axis[a])
            fuzz_fail("axis %d has %zu points", a, in->n[a]);
        for (size_t i = 0; i < in->n[a]; i++) {
            if (!isfinite(in->axis[a][i]))
                fuzz_fail("axis %d value %zu is not finite", a, i);
            if (i && !(in->axis[a][i] > in->axis[a][i - 1]))
                fuzz_fail("axis %d does not increase at %zu", a, i);
        }
        nodes *= in->n[a];
    }
    if (lut_nodes(in) != nodes)
        fuzz_fail("lut_nodes %zu, axes give %zu", lut_nodes(in), nodes);
    /* every corner, the middle of each cell along the diagonal, and points just outside */
    const double *ax[LUTAX_COUNT] = {in->axis[0], in->axis[1], in->axis[2], in->axis[3]};
    size_t k = 0, steps = 0;
    for (size_t i = 0; steps < 64; i++, steps++) {
        double p[LUTAX_COUNT];
        for (int a = 0; a < LUTAX_COUNT; a++) {
            size_t j = (i + (size_t)a) % in->n[a];
            double lo = ax[a][j], hi = j + 1 < in->n[a] ? ax[a][j + 1] : lo;
            p[a] = i % 3 == 0 ? lo : i % 3 == 1 ? lo + (hi - lo) / 2 : hi;
        }
        LutVals v;
        unsigned out = lut_eval(t, p[LUTAX_L], p[LUTAX_VGS], p[LUTAX_VDS], p[LUTAX_VSB], &v);
        if (out)
            fuzz_fail("a grid point (%g %g %g %g) is outside: mask %u", p[0], p[1], p[2], p[3], out);
        check_vals(&v, out);
        double vgs, lim;
        int st = lut_vgs_for_gmid(t, p[LUTAX_L], p[LUTAX_VDS], p[LUTAX_VSB], 5.0 + (double)(i % 25), &vgs, &v, &lim);
        if (st == LUT_INV_OK) {
            if (!(vgs >= ax[LUTAX_VGS][0] && vgs <= ax[LUTAX_VGS][in->n[LUTAX_VGS] - 1]))
                fuzz_fail("inverse lookup gave VGS %g outside the grid", vgs);
        } else if (!isnan(vgs)) {
            fuzz_fail("a failed inverse lookup (%d) gave VGS %g", st, vgs);
        }
        k++;
    }
    LutVals v;
    double past = ax[LUTAX_VGS][in->n[LUTAX_VGS] - 1];
    past = past + fabs(past) + 1;
    unsigned out = lut_eval(t, ax[LUTAX_L][0], past, ax[LUTAX_VDS][0], ax[LUTAX_VSB][0], &v);
    if (!(out & (1u << LUTAX_VGS)))
        fuzz_fail("VGS %g past the grid is not outside", past);
    check_vals(&v, out);
    (void)k;
}

/* Write t's grid back with lut_write (values from lut_eval at the nodes) and load it again. */
static void round_trip(const Lut *t)
{
    const LutInfo *in = lut_info(t);
    size_t nodes = lut_nodes(in);
    if (nodes > 4096)
        return;
    double *vals = malloc(nodes * LUTQ_COUNT * sizeof *vals);
    if (!vals)
        abort();
    size_t node = 0;
    for (size_t a = 0; a < in->n[0]; a++)
        for (size_t b = 0; b < in->n[1]; b++)
            for (size_t c = 0; c < in->n[2]; c++)
                for (size_t e = 0; e < in->n[3]; e++, node++) {
                    LutVals v;
                    if (lut_eval(t, in->axis[0][a], in->axis[3][e], in->axis[2][c], in->axis[1][b], &v))
                        fuzz_fail("node %zu is outside its own grid", node);
                    memcpy(vals + node * LUTQ_COUNT, v.q, sizeof v.q);
                }
    FILE *fp = fopen("again.lut", "wb");
    if (!fp)
        abort();
    int rc = lut_write(fp, in, vals);
    if (fclose(fp) != 0 || rc != ERR_OK)
        fuzz_fail("lut_write failed");
    DiagList d;
    diag_init(&d);
    Lut *u = lut_load("again.lut", &d);
    if (!u) {
        diag_print(&d, stderr, 0, DIAG_NOTE);
        fuzz_fail("a table written by lut_write does not load");
    }
    const LutInfo *ui = lut_info(u);
    for (int a = 0; a < LUTAX_COUNT; a++)
        if (ui->n[a] != in->n[a])
            fuzz_fail("axis %d: %zu points written, %zu read", a, in->n[a], ui->n[a]);
    lut_free(u);
    diag_free(&d);
    free(vals);
    unlink("again.lut");
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t n)
{
    write_file("fuzz.lut", data, n);
    DiagList d;
    diag_init(&d);
    Lut *t = lut_load("fuzz.lut", &d);
    fuzz_check_diags(&d, t ? ERR_OK : ERR_INPUT);
    diag_free(&d);
    if (t) {
        exercise(t);
        round_trip(t);
    }
    lut_free(t);
    unlink("fuzz.lut");
    return 0;
}
