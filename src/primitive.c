/* primitive: which subcircuits are transistor primitives, what a cell name says about the type, and
 * the sentences that list the devices biaslint does not check. */
#include "primitive.h"

#include <string.h>

static inline unsigned char fold(unsigned char c)
{
    return (unsigned char)(c >= 'A' && c <= 'Z' ? c + ('a' - 'A') : c);
}

static inline int is_letter(unsigned char c)
{
    return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z');
}

int prim_glob(const char *pat, size_t plen, const char *s)
{
    /* the usual greedy matcher with one backtrack point: the last '*' seen */
    size_t p = 0, star = (size_t)-1, mark = 0, i = 0;
    size_t n = strlen(s);
    while (i < n) {
        if (p < plen && (pat[p] == '?' || fold((unsigned char)pat[p]) == fold((unsigned char)s[i]))) {
            p++;
            i++;
        } else if (p < plen && pat[p] == '*') {
            star = p++;
            mark = i;
        } else if (star != (size_t)-1) {
            p = star + 1;
            i = ++mark;
        } else {
            return 0;
        }
    }
    while (p < plen && pat[p] == '*')
        p++;
    return p == plen;
}

int prim_parse_spec(const char *arg, PrimDecl decl, PrimSpec *out)
{
    if (!arg || !*arg)
        return 0;
    const char *eq = strchr(arg, '=');
    size_t len = eq ? (size_t)(eq - arg) : strlen(arg);
    if (len == 0)
        return 0;
    for (size_t i = 0; i < len; i++)
        if (arg[i] == ' ' || arg[i] == '\t')
            return 0;
    MosType t = MOS_UNKNOWN;
    if (eq) {
        if (decl != PRIM_DECLARE)
            return 0;
        const char *v = eq + 1;
        if ((v[0] == 'n' || v[0] == 'N') && (v[1] == 'm' || v[1] == 'M') && (v[2] == 'o' || v[2] == 'O') &&
            (v[3] == 's' || v[3] == 'S') && !v[4])
            t = MOS_NMOS;
        else if ((v[0] == 'p' || v[0] == 'P') && (v[1] == 'm' || v[1] == 'M') && (v[2] == 'o' || v[2] == 'O') &&
                 (v[3] == 's' || v[3] == 'S') && !v[4])
            t = MOS_PMOS;
        else
            return 0;
    }
    out->pattern = arg;
    out->len = len;
    out->decl = decl;
    out->type = t;
    return 1;
}

const PrimSpec *prim_find_spec(const PrimSpec *specs, size_t n, const char *cell)
{
    if (!cell)
        return NULL;
    for (size_t i = n; i-- > 0;)
        if (prim_glob(specs[i].pattern, specs[i].len, cell))
            return &specs[i];
    return NULL;
}

PrimClass prim_classify(size_t nmos, size_t ninst, size_t nforeign, size_t nother, const PrimSpec *spec)
{
    if (spec && spec->decl == PRIM_EXCLUDE)
        return PRIM_NONE;
    if (nmos == 1 && ninst == 0 && (nforeign == 0 || spec))
        return PRIM_MOS;
    if (nmos == 0 && ninst == 0 && nother == 1 && nforeign == 1)
        return PRIM_OTHER;
    return PRIM_NONE;
}

/* The type one word of letters names: 'n', 'p' or 0. */
static int word_type(const char *w, size_t n)
{
    static const char *const stems[] = {"ch", "fet", "mos", "mosfet"};
    for (size_t k = 0; k < sizeof stems / sizeof stems[0]; k++) {
        size_t sl = strlen(stems[k]);
        if (n < sl + 1)
            continue;
        const char *tail = w + n - sl;
        if (strncmp(tail, stems[k], sl) != 0)
            continue;
        char c = (char)fold((unsigned char)tail[-1]);
        size_t before = n - sl - 1; /* letters in front of the n or p */
        if ((c == 'n' || c == 'p') && before <= 4)
            return c;
    }
    return 0;
}

MosType prim_type_from_name(const char *name)
{
    if (!name)
        return MOS_UNKNOWN;
    int seen_n = 0, seen_p = 0;
    char w[32];
    for (const char *p = name; *p;) {
        if (!is_letter((unsigned char)*p)) {
            p++;
            continue;
        }
        const char *s = p;
        while (is_letter((unsigned char)*p))
            p++;
        size_t n = (size_t)(p - s);
        if (n >= sizeof w)
            continue;
        for (size_t i = 0; i < n; i++)
            w[i] = (char)fold((unsigned char)s[i]);
        int t = word_type(w, n);
        seen_n |= t == 'n';
        seen_p |= t == 'p';
    }
    if (seen_n == seen_p)
        return MOS_UNKNOWN;
    return seen_n ? MOS_NMOS : MOS_PMOS;
}

int prim_unchecked_kind(int letter)
{
    switch (fold((unsigned char)letter)) {
    case 'q':
        return UNCHK_BJT;
    case 'j':
        return UNCHK_JFET;
    case 'z':
        return UNCHK_MESFET;
    case 'n':
        return UNCHK_NELEM;
    default:
        return -1;
    }
}

void prim_unchecked_add(PrimUnchecked *u, UncheckedKind k, const char *name, const char *cell, uint32_t file,
                        size_t off)
{
    if (u->count[k] == 0) {
        u->file[k] = file;
        u->off[k] = off;
    }
    if (u->count[k] < PRIM_LISTED) {
        u->names[k][u->count[k]] = name;
        u->cells[k][u->count[k]] = cell;
    }
    u->count[k]++;
}

int prim_unchecked_text(const PrimUnchecked *u, UncheckedKind k, const char *missing_lib, Buf *out)
{
    /* ORDER UNCHECKED */
    static const char *const what[UNCHK_COUNT][2] = {
        {"bipolar transistor (Q card)", "bipolar transistors (Q cards)"},
        {"JFET (J card)", "JFETs (J cards)"},
        {"MESFET (Z card)", "MESFETs (Z cards)"},
        {"N element (a compact model such as an OSDI device)", "N elements (compact models such as OSDI devices)"},
        {"instance of a cell that is not defined", "instances of cells that are not defined"},
    };
    uint64_t n = u->count[k];
    if (!n)
        return ERR_OK;
    int rc = buf_printf(out, "%llu %s %s not checked: ", (unsigned long long)n, what[k][n != 1],
                        n == 1 ? "is" : "are");
    if (k == UNCHK_UNDEFINED)
        rc |= missing_lib ? buf_printf(out, "their definitions are not read ('%s' was not found) and ", missing_lib)
                          : buf_puts(out, "no definition is read and ");
    rc |= buf_puts(out, k == UNCHK_UNDEFINED ? "their names do not say they are MOSFETs (declare one with "
                                               "--primitive CELL=nmos|pmos)"
                                             : "biaslint reads MOSFET operating points only");
    rc |= buf_puts(out, " (");
    for (uint64_t i = 0; i < n && i < PRIM_LISTED; i++) {
        rc |= buf_printf(out, "%s%s", i ? ", " : "", u->names[k][i] ? u->names[k][i] : "?");
        if (u->cells[k][i])
            rc |= buf_printf(out, " of cell %s", u->cells[k][i]);
    }
    rc |= buf_puts(out, n > PRIM_LISTED ? ", ...)" : ")");
    return rc ? ERR_NOMEM : ERR_OK;
}
