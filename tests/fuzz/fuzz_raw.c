/* fuzz_raw: the ngspice raw-file reader (op_raw.c), binary and ASCII. The first byte is a mode:
 * bit 0 set runs every format's sniff on the rest first, as format detection does; the corpus
 * holds both binary and ASCII raw files (tests/fuzz/mkcorpus.sh), so both bodies are mutated. */
#include "fuzz.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t n);

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t n)
{
    if (n == 0)
        return 0;
    fuzz_reader(&op_raw_reader, data + 1, n - 1, "fuzz.raw", data[0] & 1);
    return 0;
}
