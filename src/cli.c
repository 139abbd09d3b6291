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
    "\n"
    "  biaslint COMMAND --help   options of a command\n"
    "  biaslint --version\n";

static const char usage_check[] =
    "usage: biaslint check NETLIST --op DUMP [options]\n"
    "\n"
    "  --op FILE           operating-point dump: ngspice output with `show` tables, an ngspice raw\n"
    "                      file (binary or ASCII), or a CSV device table\n"
    "  --op-format FMT     show | raw | csv (default: detected from the content)\n"
    "  --annotate FILE     write the netlist with the figures and findings under each MOSFET card\n"
    "  --format FMT        report format: text (default) | json\n"
    "  -o, --output FILE   write the report to FILE instead of standard output\n"
    "  --rules FILE        read rule file FILE after the defaults (repeatable)\n"
    "  --min-margin V      minimum VDS-VDSAT, e.g. 80mV (default from the rules: 50mV)\n"
    "  --min-gain X        minimum gm/gds (default from the rules: 10)\n"
    "  --fail-on LEVEL     exit 1 when a finding is at or above LEVEL: error (default) | warning | info\n"
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

static int parse_check(int argc, char **argv, int i, Options *o, Buf *msg)
{
    for (; i < argc; i++) {
        const char *a = argv[i], *eq = NULL, *v;
        if (a[0] != '-' || strcmp(a, "-") == 0) {
            if (o->netlist)
                return usage_error(msg, "more than one netlist given ('%s'); check takes one", a);
            o->netlist = a;
            continue;
        }
        if (strcmp(a, "-h") == 0 || strcmp(a, "--help") == 0)
            return buf_puts(msg, o->cmd == CMD_STRIP ? usage_strip : usage_check) ? ERR_NOMEM : CLI_HELP;
        if (strcmp(a, "-q") == 0 || strcmp(a, "--quiet") == 0) {
            o->quiet = 1;
            continue;
        }
        if (strcmp(a, "--allow-missing-lib") == 0 && o->cmd == CMD_CHECK) {
            o->allow_missing_lib = 1;
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
        } else if (opt_is(a, "--op", &eq)) {
            VALUE_OR_FAIL();
            if (o->op)
                return usage_error(msg, "--op given twice ('%s'): one dump per run", v);
            o->op = v;
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
        } else if (opt_is(a, "--format", &eq)) {
            VALUE_OR_FAIL();
            if (strcmp(v, "text") != 0 && strcmp(v, "json") != 0)
                return usage_error(msg, "unknown --format '%s': use text or json", v);
            o->format = v;
        } else if (opt_is(a, "--rules", &eq)) {
            VALUE_OR_FAIL();
            if (BUF_PUSH(o->rules, o->nrules, o->rules_cap, v) != ERR_OK)
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
            if (sev < 0)
                return usage_error(msg, "unknown --fail-on level '%s': use error, warning or info", v);
            o->fail_level = (Severity)sev;
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
    if (!o->netlist)
        return usage_error(msg, "%s needs a netlist", o->cmd == CMD_STRIP ? "strip" : "check");
    if (o->cmd == CMD_CHECK && !o->op)
        return usage_error(msg, "check needs the simulator's operating-point data: --op %s", "DUMP");
    if (o->cmd == CMD_STRIP && !o->output)
        return usage_error(msg, "strip needs an output file: -o %s", "OUT");
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
    else
        return usage_error(msg, "unknown command '%s': use check or strip", c);
    return parse_check(argc, argv, 2, o, msg);
}

void cli_free(Options *o)
{
    if (!o)
        return;
    free(o->rules);
    o->rules = NULL;
    o->nrules = 0;
    free(o->cells);
    o->cells = NULL;
    o->ncells = 0;
}
