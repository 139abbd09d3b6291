/* fuzz_show: the ngspice `show` table reader (op_show.c) on arbitrary batch output. */
#include "fuzz.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t n);

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t n)
{
    fuzz_reader(&op_show_reader, data, n, "fuzz.out", 1);
    return 0;
}
