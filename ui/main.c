/* main.c — nilstep's entry point: the explorer, or a subcommand. */
#include <signal.h>
#include <stdio.h>
#include <string.h>
#include "cli.h"
#include "explorer.h"
#include "memlimit.h"

#ifndef NILSTEP_VERSION
#define NILSTEP_VERSION "unknown"
#endif

int main(int argc, char **argv)
{
    /* A file-size limit (ulimit -f) must be a write error (EFBIG) that we
     * report, not a signal that kills the explorer with the work unsaved. */
    signal(SIGXFSZ, SIG_IGN);
    /* Out of memory is exit 3 with the limit named, never an abort. */
    memlimit_install();
    if (argc >= 2 && !strcmp(argv[1], "report"))
        return cli_report(argc - 1, argv + 1);
    if (argc >= 2 && !strcmp(argv[1], "scan"))
        return cli_scan(argc - 1, argv + 1);
    if (argc >= 2 && !strcmp(argv[1], "iterate"))
        return cli_iterate(argc - 1, argv + 1);
    if (argc >= 2 && (!strcmp(argv[1], "--help") || !strcmp(argv[1], "-h"))) {
        cli_print_help(stdout);
        return 0;
    }
    if (argc >= 2 && !strcmp(argv[1], "--version")) {
        printf("nilstep %s\n", NILSTEP_VERSION);
        return 0;
    }
    if (argc >= 2 && argv[1][0] == '-' && argv[1][1] != '\0') {
        fprintf(stderr, "nilstep: unknown option '%s' (nilstep --help for usage)\n", argv[1]);
        return 2;
    }
    if (argc > 2) {
        fprintf(stderr, "nilstep: give at most one FILE (nilstep --help for usage)\n");
        return 2;
    }
    return explorer_run(argc == 2 ? argv[1] : NULL);
}
