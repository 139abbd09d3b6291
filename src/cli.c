/* cli: the subcommands and their options. */
#include "cli.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>

static const char usage_main[] =
    "usage: biaslint COMMAND [options]\n"
    "\n"
    "Checks every MOSFET of a SPICE netlist at its simulated operating point: gm/ID, inversion\n"
    "region, VDS-VDSAT margin, intrinsic gain gm/gds and fT, against the rules.\n"
    "\n"
    "commands:\n"
    "  check NETLIST --op DUMP   compute the figures, run the checks, write the report\n"
    "  strip ANNOTATED -o OUT    remove biaslint's annotation lines from a netlist\n"
    "  merge RUN.json...         summarize many JSON reports (Monte Carlo, sweeps) per device\n"
    "  explain NETLIST DEVICE    which rule or intent comment supplies each requirement of DEVICE\n"
    "  characterize --models FILE --model NAME --l LIST --vgs A:B:S --vds A:B:S -o TABLE\n"
    "                            sweep a model with ngspice into a lookup table (gm/ID tables)\n"
    "  size TABLE --l L --vds V (--vgs V | --gm-id G) [--id I | --gm G]\n"
    "                            figures at a bias or at a gm/ID target, and the width, from a table\n"
    "\n"
    "  biaslint COMMAND --help   options of a command\n"
    "  biaslint --version\n";

static const char usage_check[] =
    "usage: biaslint check NETLIST --op DUMP [options]\n"
    "\n"
    "  --op [LABEL=]FILE   operating-point dump: ngspice output with `show` tables, an ngspice raw\n"
    "                      file (binary or ASCII), or a CSV device table. Repeat it with a LABEL per\n"
    "                      corner (--op tt=tt.log --op ss=ss.raw): every check runs in every corner\n"
    "  -j N                read up to N dumps at the same time (default 1)\n"
    "  --op-format FMT     show | raw | csv (default: detected from the content)\n"
    "  --annotate FILE     write the netlist with the figures and findings under each MOSFET card\n"
    "  --format FMT        report format: text (default) | json | csv | junit | sarif | html\n"
    "  -o, --output FILE   write the report to FILE instead of standard output\n"
    "  --report FMT=FILE   also write a report in format FMT to FILE (repeatable)\n"
    "  --baseline OLD.json mark each finding new or unchanged against an earlier JSON report, list the\n"
    "                      resolved ones and the devices that changed region\n"
    "  --rules FILE        read rule file FILE after the defaults (repeatable)\n"
    "  --no-local-rules    do not read NETLIST.rules, the rule file beside the netlist\n"
    "  --table FILE        a lookup table from `biaslint characterize` (repeatable): devices the dump\n"
    "                      has no data for get their figures from it, at the bias of their node voltages\n"
    "  --min-margin V      minimum VDS-VDSAT, e.g. 80mV (default from the rules: 50mV)\n"
    "  --min-gain X        minimum gm/gds (default from the rules: 10)\n"
    "  --fail-on LEVEL     exit 1 when a finding is at or above LEVEL: error (default) | warning | info;\n"
    "                      new: exit 1 only for findings at warning or error that the baseline lacks\n"
    "  --add-overlap       add the model cards' overlap capacitance to Cgg when computing fT\n"
    "  --max-devices N     stop before flattening a netlist with more than N MOSFETs\n"
    "  --top CELL          check subcircuit CELL (a netlist of subcircuits only, e.g. extracted)\n"
    "  --prefix PATH       CELL's instance path in the simulated testbench, e.g. xtop.x1 (default:\n"
    "                      found in the dump's device names)\n"
    "  --primitive CELL[=nmos|pmos]  treat CELL (* and ? match) as a transistor primitive: one\n"
    "                      device per X card (cells of one M card plus R, C, D are found unasked)\n"
    "  --not-primitive CELL  expand CELL as an ordinary subcircuit\n"
    "  --allow-missing-lib go on when a .include/.lib file is missing; its cells are read from the X cards\n"
    "  --color WHEN        auto (default) | always | never; NO_COLOR is honoured\n"
    "  -q, --quiet         print only errors on standard error\n"
    "\n"
    "exit status: 0 no finding at or above the fail level, 1 findings, 2 usage or input error\n";

static const char usage_merge[] =
    "usage: biaslint merge RUN.json... [options]\n"
    "\n"
    "Combines JSON reports of `biaslint check` (Monte Carlo runs, sweeps) into one summary: per device\n"
    "and corner the minimum, mean, maximum and standard deviation of gm/ID, VDS-VDSAT and gm/gds, the\n"
    "fraction of runs failing each check, the worst run, and the devices whose region changed.\n"
    "  -o, --output FILE   write the summary to FILE instead of standard output\n"
    "  --format FMT        text (default) | json | csv | html\n"
    "  --report FMT=FILE   also write the summary in format FMT to FILE (repeatable)\n"
    "  --color WHEN        auto (default) | always | never\n"
    "  -q, --quiet         print only errors on standard error\n"
    "\n"
    "exit status: 0 summary written, 2 usage or input error\n";

static const char usage_explain[] =
    "usage: biaslint explain NETLIST DEVICE [options]\n"
    "\n"
    "For DEVICE (a hierarchical name such as xamp.m1, or a glob such as 'xamp.*'), shows every\n"
    "requirement with the statement that supplies it (rule file line or intent comment) and the ones\n"
    "it overrides, the region boundaries, its matched groups and waivers; with --op, its figures and\n"
    "findings too.\n"
    "  --op FILE           an operating-point dump, to show the figures and the findings\n"
    "  --op-format FMT     show | raw | csv (default: detected from the content)\n"
    "  --rules FILE        read rule file FILE after the defaults (repeatable)\n"
    "  --no-local-rules    do not read NETLIST.rules\n"
    "  --min-margin V, --min-gain X, --add-overlap, --top CELL, --prefix PATH: as for check\n"
    "\n"
    "exit status: 0 explained, 2 usage or input error (no such device)\n";

static const char usage_strip[] =
    "usage: biaslint strip ANNOTATED -o OUT\n"
    "\n"
    "Writes ANNOTATED without biaslint's annotation lines: the netlist as it was before annotation.\n"
    "  -o, --output FILE   where to write (required; never over the input)\n";

int cli_number(const char *s, double *out)
{
    char *end;
    double v = strtod(s, &end);
    if (end == s || !isfinite(v))
        return 0;
    static const struct {
        const char *p;
        double f;
    } prefix[] = {{"meg", 1e6}, {"mil", 25.4e-6}, {"f", 1e-15}, {"p", 1e-12}, {"n", 1e-9}, {"u", 1e-6},
                  {"m", 1e-3},  {"k", 1e3},       {"g", 1e9},   {"t", 1e12}};
    for (size_t i = 0; i < sizeof prefix / sizeof prefix[0]; i++) {
        size_t n = strlen(prefix[i].p);
        if (strncasecmp(end, prefix[i].p, n) == 0) {
            v *= prefix[i].f;
            end += n;
            break;
        }
    }
    /* a unit may follow: letters and '/' only, as in 80mV, 12/V */
    for (; *end; end++)
        if (!((*end >= 'a' && *end <= 'z') || (*end >= 'A' && *end <= 'Z') || *end == '/'))
            return 0;
    *out = v;
    return 1;
}

static int usage_error(Buf *msg, const char *fmt, const char *arg)
{
    if (buf_puts(msg, "biaslint: ") || buf_printf(msg, fmt, arg) ||
        buf_puts(msg, "\nTry 'biaslint --help' or 'biaslint check --help'.\n"))
        return ERR_NOMEM;
    return CLI_USAGE;
}

/* The value of option argv[*i]: either after '=' in the same word or the next word. */
static const char *value(int argc, char **argv, int *i, const char *eq)
{
    if (eq)
        return eq + 1;
    if (*i + 1 >= argc)
        return NULL;
    return argv[++*i];
}

static int opt_is(const char *arg, const char *name, const char **eq)
{
    size_t n = strlen(name);
    if (strncmp(arg, name, n) != 0)
        return 0;
    if (arg[n] == '\0') {
        *eq = NULL;
        return 1;
    }
    if (arg[n] == '=') {
        *eq = arg + n;
        return 1;
    }
    return 0;
}

/* The length of the LABEL in "LABEL=FILE", or 0 when v is a plain file name. A label is letters,
 * digits and _ . + - (no '/'), so "./a=b.log" or "dir/a=b.log" is always a file. */
static size_t label_length(const char *v)
{
    size_t n = 0;
    while ((v[n] >= 'a' && v[n] <= 'z') || (v[n] >= 'A' && v[n] <= 'Z') || (v[n] >= '0' && v[n] <= '9') ||
           v[n] == '_' || v[n] == '.' || v[n] == '+' || v[n] == '-')
        n++;
    return n && v[n] == '=' ? n : 0;
}

/* With several --op, a plain FILE is labelled by its stem (the file name without folder and last
 * extension); a single plain --op FILE keeps the empty label. Labels must differ. */
static int corner_labels(Options *o, Buf *msg)
{
    for (size_t i = 0; o->nops > 1 && i < o->nops; i++) {
        if (o->ops[i].label[0])
            continue;
        const char *base = strrchr(o->ops[i].path, '/');
        base = base ? base + 1 : o->ops[i].path;
        const char *dot = strrchr(base, '.');
        size_t n = dot && dot != base ? (size_t)(dot - base) : strlen(base);
        char *label = strndup(base, n);
        if (!label)
            return ERR_NOMEM;
        o->ops[i].label = label;
    }
    for (size_t i = 0; i < o->nops; i++)
        for (size_t k = 0; k < i; k++)
            if (strcasecmp(o->ops[i].label, o->ops[k].label) == 0)
                return usage_error(msg, "two --op dumps have the corner label '%s': give each its own, --op LABEL=FILE",
                                   o->ops[i].label);
    return ERR_OK;
}

/* --format FMT (report != 0: --report FMT=FILE). merge writes text, json, csv and html only. */
static int report_option(Options *o, int report, const char *v, Buf *msg)
{
    const char *eq = report ? strchr(v, '=') : NULL;
    if (report && (!eq || eq == v || !eq[1]))
        return usage_error(msg, "--report needs FORMAT=FILE, e.g. --report sarif=out.sarif, not '%s'", v);
    size_t n = eq ? (size_t)(eq - v) : strlen(v);
    static const char *const names[] = {"text", "json", "csv", "junit", "sarif", "html"};
    const char *name = NULL;
    for (size_t k = 0; k < sizeof names / sizeof names[0]; k++)
        if (strlen(names[k]) == n && strncmp(names[k], v, n) == 0)
            name = names[k];
    if (!name)
        return usage_error(msg, o->cmd == CMD_MERGE ? "unknown format in '%s': use text, json, csv or html"
                                                    : "unknown --format '%s': use text, json, csv, junit, sarif or html",
                           v);
    if (o->cmd == CMD_MERGE && (strcmp(name, "junit") == 0 || strcmp(name, "sarif") == 0))
        return usage_error(msg, "merge writes text, json, csv or html, not '%s'", name);
    if (!report) {
        o->format = name;
        o->format_given = 1;
        return ERR_OK;
    }
    ReportOut r = {name, eq + 1};
    return BUF_PUSH(o->reports, o->nreports, o->reports_cap, r) != ERR_OK ? ERR_NOMEM : ERR_OK;
}

static int parse_check(int argc, char **argv, int i, Options *o, Buf *msg)
{
    for (; i < argc; i++) {
        const char *a = argv[i], *eq = NULL, *v;
        if ((a[0] != '-' || strcmp(a, "-") == 0) && o->cmd == CMD_MERGE) {
            if (BUF_PUSH(o->runs, o->nruns, o->runs_cap, a) != ERR_OK)
                return ERR_NOMEM;
            continue;
        }
        if ((a[0] != '-' || strcmp(a, "-") == 0) && o->cmd == CMD_EXPLAIN && o->netlist) {
            if (o->explain)
                return usage_error(msg, "explain takes one device name or glob, not also '%s'", a);
            o->explain = a;
            continue;
        }
        if (a[0] != '-' || strcmp(a, "-") == 0) {
            if (o->netlist)
                return usage_error(msg, "more than one netlist given ('%s'); check takes one", a);
            o->netlist = a;
            continue;
        }
        if (strcmp(a, "-h") == 0 || strcmp(a, "--help") == 0)
            return buf_puts(msg, o->cmd == CMD_STRIP     ? usage_strip
                                 : o->cmd == CMD_MERGE   ? usage_merge
                                 : o->cmd == CMD_EXPLAIN ? usage_explain
                                                         : usage_check)
                       ? ERR_NOMEM
                       : CLI_HELP;
        if (strcmp(a, "-q") == 0 || strcmp(a, "--quiet") == 0) {
            o->quiet = 1;
            continue;
        }
        if (strcmp(a, "--allow-missing-lib") == 0 && o->cmd == CMD_CHECK) {
            o->allow_missing_lib = 1;
            continue;
        }
        if (strcmp(a, "--no-local-rules") == 0 && (o->cmd == CMD_CHECK || o->cmd == CMD_EXPLAIN)) {
            o->no_local_rules = 1;
            continue;
        }
        if (strcmp(a, "--add-overlap") == 0) {
            o->add_overlap = 1;
            continue;
        }
#define VALUE_OR_FAIL()                                                  \
    if (!(v = value(argc, argv, &i, eq)))                                \
        return usage_error(msg, "option '%s' needs a value", a);
        if (strcmp(a, "-o") == 0 || opt_is(a, "--output", &eq)) {
            VALUE_OR_FAIL();
            o->output = v;
        } else if (o->cmd == CMD_STRIP) {
            return usage_error(msg, "unknown option '%s' for strip", a);
        } else if (opt_is(a, "--format", &eq) || opt_is(a, "--report", &eq)) {
            VALUE_OR_FAIL();
            int rc = report_option(o, a[2] == 'r', v, msg);
            if (rc != ERR_OK)
                return rc;
        } else if (o->cmd == CMD_MERGE && strcmp(a, "--color") != 0 && strncmp(a, "--color=", 8) != 0) {
            return usage_error(msg, "unknown option '%s' for merge", a);
        } else if (opt_is(a, "--op", &eq)) {
            VALUE_OR_FAIL();
            OpCorner oc = {"", v};
            size_t n = label_length(v);
            if (n) {
                char *label = strndup(v, n);
                if (!label)
                    return ERR_NOMEM;
                oc = (OpCorner){label, v + n + 1};
                if (!oc.path[0]) {
                    free(label);
                    return usage_error(msg, "--op '%s' names a corner but no file: use --op LABEL=FILE", v);
                }
            }
            if (BUF_PUSH(o->ops, o->nops, o->ops_cap, oc) != ERR_OK) {
                if (oc.label[0])
                    free((char *)oc.label);
                return ERR_NOMEM;
            }
            if (!o->op)
                o->op = oc.path;
        } else if (opt_is(a, "--baseline", &eq)) {
            VALUE_OR_FAIL();
            o->baseline = v;
        } else if (strcmp(a, "-j") == 0 || strncmp(a, "-j", 2) == 0 || opt_is(a, "--jobs", &eq)) {
            if (a[1] == 'j' && a[2])
                v = a + 2; /* -j4 */
            else
                VALUE_OR_FAIL();
            double n;
            if (!cli_number(v, &n) || n < 1 || n > 256 || n != (double)(unsigned)n)
                return usage_error(msg, "-j needs a whole number of parallel reads from 1 to 256, not '%s'", v);
            o->jobs = (unsigned)n;
        } else if (opt_is(a, "--op-format", &eq)) {
            VALUE_OR_FAIL();
            if (strcmp(v, "show") == 0)
                o->op_format = OPFMT_SHOW;
            else if (strcmp(v, "raw") == 0)
                o->op_format = OPFMT_RAW;
            else if (strcmp(v, "csv") == 0)
                o->op_format = OPFMT_CSV;
            else
                return usage_error(msg, "unknown --op-format '%s': use show, raw or csv", v);
        } else if (opt_is(a, "--annotate", &eq)) {
            VALUE_OR_FAIL();
            o->annotate = v;
        } else if (opt_is(a, "--rules", &eq)) {
            VALUE_OR_FAIL();
            if (BUF_PUSH(o->rules, o->nrules, o->rules_cap, v) != ERR_OK)
                return ERR_NOMEM;
        } else if (opt_is(a, "--table", &eq)) {
            VALUE_OR_FAIL();
            if (BUF_PUSH(o->tables, o->ntables, o->tables_cap, v) != ERR_OK)
                return ERR_NOMEM;
        } else if (opt_is(a, "--min-margin", &eq)) {
            VALUE_OR_FAIL();
            if (!cli_number(v, &o->min_margin))
                return usage_error(msg, "--min-margin needs a voltage such as 80mV, not '%s'", v);
        } else if (opt_is(a, "--min-gain", &eq)) {
            VALUE_OR_FAIL();
            if (!cli_number(v, &o->min_gain) || o->min_gain < 0)
                return usage_error(msg, "--min-gain needs a positive number such as 30, not '%s'", v);
        } else if (opt_is(a, "--fail-on", &eq)) {
            VALUE_OR_FAIL();
            int sev = rule_severity_lookup(v, strlen(v));
            if (strcmp(v, "new") == 0) {
                o->fail_new = 1;
                o->fail_level = SEV_WARNING;
            } else if (sev < 0) {
                return usage_error(msg, "unknown --fail-on level '%s': use error, warning, info or new", v);
            } else {
                o->fail_new = 0;
                o->fail_level = (Severity)sev;
            }
        } else if (opt_is(a, "--max-devices", &eq)) {
            VALUE_OR_FAIL();
            double n;
            if (!cli_number(v, &n) || n < 1 || n > 4e9)
                return usage_error(msg, "--max-devices needs a whole number, not '%s'", v);
            o->max_devices = (size_t)n;
        } else if (opt_is(a, "--top", &eq)) {
            VALUE_OR_FAIL();
            if (!*v)
                return usage_error(msg, "--top needs a subcircuit name%s", "");
            o->top = v;
        } else if (opt_is(a, "--prefix", &eq)) {
            VALUE_OR_FAIL();
            o->prefix = v;
        } else if (opt_is(a, "--primitive", &eq) || opt_is(a, "--not-primitive", &eq)) {
            int excl = a[2] == 'n';
            VALUE_OR_FAIL();
            PrimSpec sp;
            if (!prim_parse_spec(v, excl ? PRIM_EXCLUDE : PRIM_DECLARE, &sp))
                return usage_error(msg, excl ? "--not-primitive needs a cell name, not '%s'"
                                             : "--primitive needs CELL or CELL=nmos or CELL=pmos, not '%s'", v);
            if (BUF_PUSH(o->cells, o->ncells, o->cells_cap, sp) != ERR_OK)
                return ERR_NOMEM;
        } else if (opt_is(a, "--color", &eq)) {
            VALUE_OR_FAIL();
            if (strcmp(v, "auto") == 0)
                o->color = COLOR_AUTO;
            else if (strcmp(v, "always") == 0)
                o->color = COLOR_ALWAYS;
            else if (strcmp(v, "never") == 0)
                o->color = COLOR_NEVER;
            else
                return usage_error(msg, "unknown --color '%s': use auto, always or never", v);
        } else {
            return usage_error(msg, "unknown option '%s'", a);
        }
#undef VALUE_OR_FAIL
    }
    if (o->cmd == CMD_MERGE)
        return o->nruns ? ERR_OK : usage_error(msg, "merge needs at least one JSON report of %s", "biaslint check");
    if (!o->netlist)
        return usage_error(msg, "%s needs a netlist",
                           o->cmd == CMD_STRIP ? "strip" : o->cmd == CMD_EXPLAIN ? "explain" : "check");
    if (o->cmd == CMD_EXPLAIN && !o->explain)
        return usage_error(msg, "explain needs a device after the netlist: biaslint explain %s DEVICE", o->netlist);
    if (o->cmd == CMD_CHECK && !o->op)
        return usage_error(msg, "check needs the simulator's operating-point data: --op %s", "DUMP");
    if (o->cmd == CMD_CHECK) {
        int rc = corner_labels(o, msg);
        if (rc != ERR_OK)
            return rc;
        if (o->fail_new && !o->baseline)
            return usage_error(msg, "--fail-on new needs --baseline OLD.json to tell new findings from old (%s)",
                               "or use --fail-on error|warning");
    }
    if (o->cmd == CMD_STRIP && !o->output)
        return usage_error(msg, "strip needs an output file: -o %s", "OUT");
    return ERR_OK;
}

/* ---- lookup tables: characterize and size ------------------------------------------------------- */

static const char usage_characterize[] =
    "usage: biaslint characterize --models FILE [--section NAME] --model NAME --l LIST\n"
    "                             --vgs START:STOP:STEP --vds START:STOP:STEP [--vsb START:STOP:STEP]\n"
    "                             [--temp C] [--wref W] -o TABLE\n"
    "\n"
    "Sweeps one MOSFET model with ngspice (`ngspice -b`) over L x VSB x VDS x VGS and writes a lookup\n"
    "table (CSV with a commented header; see README, \"Lookup tables\"). The device type (nmos or pmos)\n"
    "and level come from the model's .model card. Voltages are magnitudes for PMOS too.\n"
    "  --models FILE       the model file: .include'd, or .lib'd when --section is given\n"
    "  --section NAME      the .lib section (a corner) to read\n"
    "  --model NAME        the model to characterize (bins NAME.1, NAME.2 ... are picked by ngspice)\n"
    "  --l LIST            channel lengths, comma-separated, e.g. 180n,250n,500n,1u,2u\n"
    "  --vgs, --vds, --vsb START:STOP:STEP   the bias grid in volts, e.g. 0:1.8:25m (--vsb 0 by default)\n"
    "  --temp C            simulation temperature (default: the model file's .temp, else 27)\n"
    "  --wref W            reference width, one finger (default 10u)\n"
    "  -o, --output TABLE  the table file (written only when every sweep worked)\n"
    "  --deck FILE         also keep the ngspice deck in FILE\n"
    "  -q, --quiet         no progress bar, only errors on standard error\n"
    "ngspice is run from PATH, or as the program named by BIASLINT_NGSPICE.\n"
    "exit status: 0 table written, 2 usage or input error, ngspice missing, failing or not converging\n";

static const char usage_size[] =
    "usage: biaslint size TABLE --l L --vds V [--vsb V] (--vgs V | --gm-id G) [--id I | --gm G]\n"
    "\n"
    "Figures for sizing by hand from a lookup table: VGS, gm/ID, ID/W, gain gm/gds, fT, VTH, VDSAT at\n"
    "the bias given (--vgs), or at the VGS that gives the gm/ID asked for (--gm-id: the inverse lookup);\n"
    "with --id or --gm also the width W (total over fingers) that carries that current or gm.\n"
    "  --l L --vds V --vsb V   length and bias (PMOS: magnitudes); --vsb 0 by default\n"
    "  --format FMT        text (default) | json (keys vgs gm_id id_w gain ft vth vdsat w, SI units)\n"
    "  -o, --output FILE   write to FILE instead of standard output\n"
    "exit status: 0 answered, 2 usage or input error (the point outside the table, an unreachable gm/ID)\n";

/* "a:b:c" or "a" into g[3] (start, stop, step). */
static int grid_value(const char *v, double g[3])
{
    char buf[3][64];
    int n = 0;
    const char *p = v;
    for (;;) {
        const char *c = strchr(p, ':');
        size_t len = c ? (size_t)(c - p) : strlen(p);
        if (!len || len >= sizeof buf[0] || n == 3)
            return 0;
        memcpy(buf[n], p, len);
        buf[n++][len] = '\0';
        if (!c)
            break;
        p = c + 1;
    }
    if (n != 1 && n != 3)
        return 0;
    for (int i = 0; i < n; i++)
        if (!cli_number(buf[i], &g[i]))
            return 0;
    if (n == 1) {
        g[1] = g[0];
        g[2] = 1;
    }
    return 1;
}

/* "180n,250n,1u" into o->lengths. */
static int length_list(const char *v, Options *o)
{
    free(o->lengths);
    o->lengths = NULL;
    o->nlengths = 0;
    size_t cap = 0;
    const char *p = v;
    for (;;) {
        const char *c = strchr(p, ',');
        size_t len = c ? (size_t)(c - p) : strlen(p);
        char buf[64];
        double x;
        if (!len || len >= sizeof buf)
            return 0;
        memcpy(buf, p, len);
        buf[len] = '\0';
        if (!cli_number(buf, &x) || BUF_PUSH(o->lengths, o->nlengths, cap, x) != ERR_OK)
            return 0;
        if (!c)
            return 1;
        p = c + 1;
    }
}

static int parse_table_cmd(int argc, char **argv, int i, Options *o, Buf *msg)
{
    int ch = o->cmd == CMD_CHARACTERIZE;
    for (int k = 0; k < 3; k++)
        o->vgs_grid[k] = o->vds_grid[k] = o->vsb_grid[k] = NAN;
    o->temp_c = o->w_ref = NAN;
    o->at_l = o->at_vgs = o->at_vds = o->at_vsb = NAN;
    o->want_gm_id = o->want_id = o->want_gm = NAN;
    for (; i < argc; i++) {
        const char *a = argv[i], *v;
        if (a[0] != '-' || strcmp(a, "-") == 0) {
            if (ch)
                return usage_error(msg, "characterize takes no file argument ('%s'): the table goes to -o TABLE", a);
            if (o->table)
                return usage_error(msg, "more than one table given ('%s'); size reads one", a);
            o->table = a;
            continue;
        }
        if (strcmp(a, "-h") == 0 || strcmp(a, "--help") == 0)
            return buf_puts(msg, ch ? usage_characterize : usage_size) ? ERR_NOMEM : CLI_HELP;
        if (strcmp(a, "-q") == 0 || strcmp(a, "--quiet") == 0) {
            o->quiet = 1;
            continue;
        }
        const char *eq = strncmp(a, "--", 2) == 0 ? strchr(a, '=') : NULL;
        size_t an = eq ? (size_t)(eq - a) : strlen(a);
        if (eq)
            v = eq + 1;
        else if (i + 1 < argc)
            v = argv[++i];
        else
            return usage_error(msg, "option '%s' needs a value", a);
#define IS(name) (an == strlen(name) && strncmp(a, name, an) == 0)
#define NUMBER(dst, what)                                                                              \
    do {                                                                                               \
        if (!cli_number(v, &(dst)))                                                                    \
            return usage_error(msg, "the option needs a number such as " what ", not '%s'", v);       \
    } while (0)
        if (IS("-o") || IS("--output")) {
            o->output = v;
        } else if (ch && IS("--models")) {
            o->models = v;
        } else if (ch && IS("--section")) {
            o->section = v;
        } else if (ch && IS("--model")) {
            o->model = v;
        } else if (ch && IS("--l")) {
            if (!length_list(v, o))
                return usage_error(msg, "--l needs lengths separated by commas, such as 180n,500n,1u, not '%s'", v);
        } else if (ch && (IS("--vgs") || IS("--vds") || IS("--vsb"))) {
            double *g = a[3] == 'g' ? o->vgs_grid : a[3] == 'd' ? o->vds_grid : o->vsb_grid;
            if (!grid_value(v, g))
                return usage_error(msg, "the grid options take START:STOP:STEP in volts, such as 0:1.8:25m, not '%s'",
                                   v);
        } else if (ch && IS("--temp")) {
            NUMBER(o->temp_c, "27");
        } else if (ch && IS("--wref")) {
            NUMBER(o->w_ref, "10u");
        } else if (ch && IS("--deck")) {
            o->deck = v;
        } else if (!ch && IS("--l")) {
            NUMBER(o->at_l, "500n");
        } else if (!ch && IS("--vgs")) {
            NUMBER(o->at_vgs, "0.6");
        } else if (!ch && IS("--vds")) {
            NUMBER(o->at_vds, "0.9");
        } else if (!ch && IS("--vsb")) {
            NUMBER(o->at_vsb, "0");
        } else if (!ch && IS("--gm-id")) {
            NUMBER(o->want_gm_id, "15");
        } else if (!ch && IS("--id")) {
            NUMBER(o->want_id, "125u");
        } else if (!ch && IS("--gm")) {
            NUMBER(o->want_gm, "2m");
        } else if (!ch && IS("--format")) {
            if (strcmp(v, "text") != 0 && strcmp(v, "json") != 0)
                return usage_error(msg, "size writes --format text or json, not '%s'", v);
            o->format = v;
        } else {
            return usage_error(msg, ch ? "unknown option '%s' for characterize" : "unknown option '%s' for size", a);
        }
#undef IS
#undef NUMBER
    }
    if (ch) {
        if (!o->models || !o->model)
            return usage_error(msg, "characterize needs --models FILE and --model NAME%s", "");
        if (!o->nlengths)
            return usage_error(msg, "characterize needs the lengths: --l LIST, e.g. --l 180n,500n,1u%s", "");
        if (isnan(o->vgs_grid[0]) || isnan(o->vds_grid[0]))
            return usage_error(msg, "characterize needs the bias grid: --vgs START:STOP:STEP --vds START:STOP:STEP%s",
                               "");
        if (!o->output)
            return usage_error(msg, "characterize needs the table file to write: -o %s", "TABLE");
        if (isnan(o->vsb_grid[0])) {
            o->vsb_grid[0] = o->vsb_grid[1] = 0;
            o->vsb_grid[2] = 1;
        }
        if (isnan(o->w_ref))
            o->w_ref = 10e-6;
        return ERR_OK;
    }
    if (!o->table)
        return usage_error(msg, "size needs a table file (from biaslint characterize)%s", "");
    if (isnan(o->at_l) || isnan(o->at_vds))
        return usage_error(msg, "size needs the length and the drain voltage: --l L --vds V%s", "");
    if (isnan(o->at_vgs) == isnan(o->want_gm_id))
        return usage_error(msg, "size needs exactly one of --vgs V (figures at a bias) and --gm-id G (the bias that "
                                "gives a gm/ID)%s",
                           "");
    if (!isnan(o->want_id) && !isnan(o->want_gm))
        return usage_error(msg, "give --id or --gm, not both: the width follows from one of them%s", "");
    if (isnan(o->at_vsb))
        o->at_vsb = 0;
    return ERR_OK;
}

int cli_parse(int argc, char **argv, Options *o, Buf *msg)
{
    memset(o, 0, sizeof *o);
    o->min_margin = NAN;
    o->min_gain = NAN;
    o->fail_level = SEV_ERROR;
    o->format = "text";
    if (argc < 2)
        return buf_puts(msg, usage_main) ? ERR_NOMEM : CLI_USAGE;
    const char *c = argv[1];
    if (strcmp(c, "-h") == 0 || strcmp(c, "--help") == 0 || strcmp(c, "help") == 0)
        return buf_puts(msg, usage_main) ? ERR_NOMEM : CLI_HELP;
    if (strcmp(c, "--version") == 0 || strcmp(c, "-V") == 0)
        return buf_puts(msg, "biaslint " BIASLINT_VERSION "\n") ? ERR_NOMEM : CLI_VERSION;
    if (strcmp(c, "check") == 0)
        o->cmd = CMD_CHECK;
    else if (strcmp(c, "strip") == 0)
        o->cmd = CMD_STRIP;
    else if (strcmp(c, "merge") == 0)
        o->cmd = CMD_MERGE;
    else if (strcmp(c, "explain") == 0)
        o->cmd = CMD_EXPLAIN;
    else if (strcmp(c, "characterize") == 0 || strcmp(c, "size") == 0) {
        o->cmd = c[0] == 'c' ? CMD_CHARACTERIZE : CMD_SIZE;
        return parse_table_cmd(argc, argv, 2, o, msg);
    } else
        return usage_error(msg, "unknown command '%s': use check, strip, merge, explain, characterize or size", c);
    return parse_check(argc, argv, 2, o, msg);
}

void cli_free(Options *o)
{
    if (!o)
        return;
    free(o->rules);
    o->rules = NULL;
    o->nrules = 0;
    for (size_t i = 0; i < o->nops; i++)
        if (o->ops[i].label[0])
            free((char *)o->ops[i].label);
    free(o->ops);
    free(o->reports);
    free(o->runs);
    free(o->tables);
    free(o->lengths);
    o->tables = NULL;
    o->lengths = NULL;
    o->ntables = o->nlengths = 0;
    free(o->cells);
    o->cells = NULL;
    o->ncells = 0;
    o->ops = NULL;
    o->reports = NULL;
    o->runs = NULL;
    o->nops = o->nreports = o->nruns = 0;
}
