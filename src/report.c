/* report: the table of writers and the engineering-notation formatter every writer (and check's
 * messages) uses. */
#include "report.h"

#include <math.h>
#include <string.h>

static const ReportWriter *const writers[] = {&rep_text_writer, &rep_json_writer};

const ReportWriter *rep_lookup(const char *name)
{
    if (!name)
        return NULL;
    for (size_t i = 0; i < sizeof writers / sizeof writers[0]; i++)
        if (strcmp(writers[i]->name, name) == 0)
            return writers[i];
    return NULL;
}

/* SI prefixes from 1e-24 to 1e24, index (exponent/3 + 8). "u" stands for micro (ASCII output). */
static const char *const prefix[] = {"y", "z", "a", "f", "p", "n", "u", "m", "", "k", "M", "G", "T", "P", "E", "Z", "Y"};

char *rep_eng(double v, const char *unit, char *buf, size_t size)
{
    if (!unit)
        unit = "";
    if (size == 0)
        return buf;
    if (isnan(v)) {
        snprintf(buf, size, "-");
        return buf;
    }
    if (isinf(v)) {
        snprintf(buf, size, "%sinf%s", v < 0 ? "-" : "", unit);
        return buf;
    }
    if (v == 0.0) {
        snprintf(buf, size, "0%s", unit);
        return buf;
    }
    double a = fabs(v);
    int e3 = (int)floor(log10(a) / 3.0) * 3;
    double mant = a / pow(10.0, e3);
    if (mant < 1.0) { /* log10 rounding just below a power of 1000 */
        e3 -= 3;
        mant *= 1000.0;
    } else if (mant >= 1000.0) {
        e3 += 3;
        mant /= 1000.0;
    }
    /* round to 3 significant digits first: 999.7 becomes 1 of the next prefix, not "1e+03" */
    int digits = mant >= 100.0 ? 0 : mant >= 10.0 ? 1 : 2;
    double scale = digits == 0 ? 1.0 : digits == 1 ? 10.0 : 100.0;
    double r = round(mant * scale) / scale;
    if (r >= 1000.0) {
        e3 += 3;
        r /= 1000.0;
    }
    int idx = e3 / 3 + 8;
    if (idx < 0 || idx >= (int)(sizeof prefix / sizeof prefix[0])) {
        snprintf(buf, size, "%.3g%s", v, unit);
        return buf;
    }
    snprintf(buf, size, "%s%.3g%s%s", v < 0 ? "-" : "", r, prefix[idx], unit);
    return buf;
}
