/*
 * fuzz_config.c - the daemon's configuration readers: any bytes as the
 * JSON file (lc_server_config_parse, what --config FILE reads), then flags
 * on top (lc_server_config_flag, what the command line sets).
 *
 * Input layout: the bytes up to the first NUL are the file; what follows is
 * split at NULs into flag, value, flag, value, ... (a flag without a value
 * is given NULL, as the command line does for a last flag).
 *
 * Properties checked on every input:
 * - parse and flag return what config.h promises (0/-1, 1/0/-1), every -1
 *   with a reason; nothing crashes, reads past the input or leaks;
 * - a configuration that was accepted prints (lc_server_config_print) as
 *   JSON that the parser accepts again and that prints the same.
 */
#include "fuzz.h"

#include <string.h>

#include "config.h"

/* cfg printed into a malloc'd string (the caller frees it). */
static char *print_config(const lc_server_config *cfg, size_t *len)
{
    char *s = NULL;
    FILE *f = open_memstream(&s, len);
    LC_FUZZ_CHECK(f != NULL, "open_memstream failed");
    lc_server_config_print(cfg, f);
    LC_FUZZ_CHECK(fclose(f) == 0, "memstream close failed");
    return s;
}

static void check_print_round_trip(const lc_server_config *cfg)
{
    size_t n1, n2;
    char *t1 = print_config(cfg, &n1);
    lc_server_config back;
    lc_server_config_default(&back);
    char err[256] = "";
    int rc = lc_server_config_parse(&back, t1, n1, err, sizeof err);
    LC_FUZZ_CHECK(rc == 0, "printed configuration refused: %s\n%s", err, t1);
    char *t2 = print_config(&back, &n2);
    LC_FUZZ_CHECK(n1 == n2 && memcmp(t1, t2, n1) == 0, "print round trip changed:\n%s%s", t1,
                  t2);
    free(t1);
    free(t2);
}

/* The next NUL-terminated piece of [*p, end), or NULL at the end. */
static const char *next_piece(const char **p, const char *end)
{
    if (*p >= end)
        return NULL;
    const char *s = *p;
    const char *nul = memchr(s, '\0', (size_t)(end - s));
    *p = nul ? nul + 1 : end;
    return s;
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    const char *text = (const char *)data;
    const char *nul = memchr(text, '\0', size);
    size_t file_len = nul ? (size_t)(nul - text) : size;

    lc_server_config cfg;
    lc_server_config_default(&cfg);
    char err[256] = "";
    int rc = lc_server_config_parse(&cfg, text, file_len, err, sizeof err);
    LC_FUZZ_CHECK(rc == 0 || (rc == -1 && err[0]), "parse returned %d, reason '%s'", rc, err);
    if (rc == 0)
        check_print_round_trip(&cfg);

    if (nul) {
        /* The flags need NUL-terminated strings: a copy with one at the end. */
        size_t rest = size - file_len - 1;
        char *args = malloc(rest + 1);
        LC_FUZZ_CHECK(args != NULL, "out of memory");
        memcpy(args, nul + 1, rest);
        args[rest] = '\0';
        const char *p = args, *end = args + rest;
        const char *flag;
        while ((flag = next_piece(&p, end)) != NULL) {
            const char *value = next_piece(&p, end);
            err[0] = '\0';
            int frc = lc_server_config_flag(&cfg, flag, value, err, sizeof err);
            LC_FUZZ_CHECK(frc == 1 || frc == 0 || (frc == -1 && err[0]),
                          "flag '%s' returned %d, reason '%s'", flag, frc, err);
        }
        free(args);
        check_print_round_trip(&cfg);
    }
    return 0;
}
