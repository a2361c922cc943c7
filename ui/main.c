/* main.c — nilstep's entry point: the explorer, or a subcommand. */
#include <stdio.h>
#include <string.h>
#include "cli.h"
#if __has_include("explorer.h")
#include "explorer.h"
#else
/* Until the explorer lands, `nilstep` prints the default scenario's report. */
#include <stdlib.h>
#include "defaults.h"
#include "session.h"
static int explorer_run(const char *path)
{
    if (path) {
        char *argv[] = {"report", (char *)path, NULL};
        return cli_report(2, argv);
    }
    char tmpl[] = "/tmp/nilstep-default-XXXXXX";
    int fd = mkstemp(tmpl);
    if (fd < 0)
        return 2;
    FILE *f = fdopen(fd, "w");
    fputs(defaults_session_text(), f);
    fclose(f);
    char *argv[] = {"report", tmpl, NULL};
    int st = cli_report(2, argv);
    remove(tmpl);
    return st;
}
#endif

#ifndef NILSTEP_VERSION
#define NILSTEP_VERSION "unknown"
#endif

int main(int argc, char **argv)
{
    if (argc >= 2 && !strcmp(argv[1], "report"))
        return cli_report(argc - 1, argv + 1);
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
