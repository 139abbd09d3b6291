/* fuzz_sweep: the reader of ngspice's sweep output that `biaslint characterize` uses
 * (char_read_sweep), on arbitrary bytes as the raw file of a small fixed grid (tests/sweepgrid.h).
 * The first byte picks the model: bit 0 a PMOS, bit 1 levels 1 to 3 (else BSIM); the rest is the
 * file. The seeds (tests/fuzz/seeds/sweep/) are ngspice's own output for that grid on the demo's
 * models.
 *
 * Promises checked: a success has no error; a failure has an error with a message (the reader's
 * messages name no file: the raw file is biaslint's own temporary one, so char_build puts them in
 * a message about the model file). */
#include "fuzz.h"

#include "../sweepgrid.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t n);

FUZZ_IN_PRIVATE_DIR

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t n)
{
    if (n == 0)
        return 0;
    FILE *fp = fopen("sweep.raw", "wb");
    if (!fp || (n > 1 && fwrite(data + 1, 1, n - 1, fp) != n - 1) || fclose(fp) != 0)
        abort();
    CharSpec s;
    sweep_grid(&s);
    DiagList d;
    diag_init(&d);
    int rc = char_read_sweep(&s, data[0] & 1 ? MOS_PMOS : MOS_NMOS, !(data[0] & 2), "sweep.raw", &d);
    if (rc == ERR_OK && d.nerrors)
        fuzz_fail("success with %zu errors", d.nerrors);
    if (rc != ERR_OK && !d.oom && (d.nerrors == 0 || !d.items[0].msg || !d.items[0].msg[0]))
        fuzz_fail("status %d without an error message", rc);
    diag_free(&d);
    unlink("sweep.raw");
    return 0;
}
