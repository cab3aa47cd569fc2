/* cli.c - see cli.h. */
#include "cli.h"

#include <stdarg.h>
#include <stdio.h>
#include <string.h>

static void say(const char *cmd, const char *fmt, va_list ap)
{
    fprintf(stderr, "lacuna %s: ", cmd);
    vfprintf(stderr, fmt, ap);
    fputc('\n', stderr);
}

int lc_cli_usage_error(const char *cmd, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    say(cmd, fmt, ap);
    va_end(ap);
    return LC_EXIT_USAGE;
}

int lc_cli_fail(const char *cmd, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    say(cmd, fmt, ap);
    va_end(ap);
    return LC_EXIT_FAIL;
}

bool lc_cli_wants_help(int argc, char **argv)
{
    for (int i = 1; i < argc; i++) {
        if (strcmp(argv[i], "--") == 0)
            return false;
        if (strcmp(argv[i], "-h") == 0 || strcmp(argv[i], "--help") == 0)
            return true;
    }
    return false;
}
