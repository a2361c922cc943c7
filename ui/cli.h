/* cli.h — the non-interactive command line: `nilstep report`, help and
 * version texts. */
#ifndef NILSTEP_CLI_H
#define NILSTEP_CLI_H

#include <stdio.h>

/* Runs `nilstep report ...`; argv[0] is "report".  Returns the exit status
 * of doc/design.md §8: 0 done, 1 map not well defined, 2 bad input or usage,
 * 3 a resource limit stopped the computation. */
int cli_report(int argc, char **argv);

/* Runs `nilstep iterate ...` (ui/cli_iterate.c); argv[0] is "iterate".
 * Exit status as for report: 0, 1 map not well defined (the failing
 * relators on stderr, no iterates), 2 bad input, 3 stopped. */
int cli_iterate(int argc, char **argv);

/* Writes the --help text. */
void cli_print_help(FILE *out);

/* `nilstep scan ...` (argv[0] is "scan"): many maps of one group, see
 * src/scan.h.  Returns the exit status. */
int cli_scan(int argc, char **argv);
void cli_print_scan_help(FILE *out);

#endif
