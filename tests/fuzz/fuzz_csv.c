/* fuzz_csv: the CSV device-table reader (op_csv.c). */
#include "fuzz.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t n);

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t n)
{
    fuzz_reader(&op_csv_reader, data, n, "fuzz.csv", 1);
    return 0;
}
