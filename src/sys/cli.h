/*
 * cli.h - what every subcommand shares on the command line: the exit codes,
 * the one-line reason on stderr, and the help flag.
 *
 * Exit codes (as `lacuna --help` says): 0 success, 1 runtime failure, 2 bad
 * usage or bad input, with a one-line reason on stderr naming the field at
 * fault.
 */
#ifndef LC_CLI_H
#define LC_CLI_H

#include <stdbool.h>

enum { LC_EXIT_OK = 0, LC_EXIT_FAIL = 1, LC_EXIT_USAGE = 2 };

/* Prints "lacuna <cmd>: <reason>" on stderr and returns LC_EXIT_USAGE. */
int lc_cli_usage_error(const char *cmd, const char *fmt, ...)
    __attribute__((format(printf, 2, 3)));

/* Prints "lacuna <cmd>: <reason>" on stderr and returns LC_EXIT_FAIL. */
int lc_cli_fail(const char *cmd, const char *fmt, ...) __attribute__((format(printf, 2, 3)));

/* True when argv holds -h or --help (before a "--"). */
bool lc_cli_wants_help(int argc, char **argv);

#endif
