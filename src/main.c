/* main: parse the command line, run the command, print the diagnostics, return the exit status. */
#include <stdio.h>
#include <stdlib.h>
#include <unistd.h>

#include "cli.h"
#include "diag.h"
#include "run.h"
#include "size.h"

static int want_color(ColorMode m, int fd)
{
    if (m != COLOR_AUTO)
        return m == COLOR_ALWAYS;
    const char *no = getenv("NO_COLOR");
    return isatty(fd) && !(no && no[0]);
}

int main(int argc, char **argv)
{
    Options o;
    Buf msg = BUF_INIT;
    int rc = cli_parse(argc, argv, &o, &msg);
    if (rc != ERR_OK) {
        fputs(msg.data ? msg.data : "biaslint: out of memory\n", rc == CLI_USAGE ? stderr : stdout);
        buf_free(&msg);
        cli_free(&o);
        return rc == CLI_USAGE ? EXIT_BAD_INPUT : rc == ERR_NOMEM ? EXIT_INTERNAL : EXIT_CLEAN;
    }
    DiagList d;
    diag_init(&d);
    int status = o.cmd == CMD_STRIP ? run_strip(&o, &d)
                 : o.cmd == CMD_SIZE ? run_size(&o, stdout, &d) /* size.h: the table commands */
                 : o.cmd == CMD_CHARACTERIZE ? run_characterize(&o, isatty(2) ? stderr : NULL, &d)
                 : o.cmd == CMD_MERGE ? run_merge(&o, stdout, want_color(o.color, o.output ? -1 : 1), &d)
                                    : run_check(&o, stdout, want_color(o.color, o.output ? -1 : 1), &d);
    diag_print(&d, stderr, want_color(o.color, 2), o.quiet ? DIAG_ERROR : DIAG_NOTE);
    diag_free(&d);
    cli_free(&o);
    buf_free(&msg);
    return status;
}
