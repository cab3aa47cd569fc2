/*
 * fuzz_config.c - the daemon's configuration readers: any bytes as the
 * JSON file (lc_server_config_parse, what --config FILE reads), then flags
 * on top (lc_server_config_flag, what the command line sets).
 *
 * Then the Origin check of websocket upgrades (lc_origin_allowed), the one
 * other reader of outside text here: the Origin and Host header values
 * against the configured allow_origin list.
 *
 * Input layout: the bytes up to the first NUL are the file; what follows is
 * split at NULs into ORIGIN, HOST, then flag, value, flag, value, ... (a
 * flag without a value is given NULL, as the command line does for a last
 * flag).
 *
 * Properties checked on every input:
 * - parse and flag return what config.h promises (0/-1, 1/0/-1), every -1
 *   with a reason; nothing crashes, reads past the input or leaks;
 * - a configuration that was accepted prints (lc_server_config_print) as
 *   JSON that the parser accepts again and that prints the same;
 * - the Origin check lets in what has no Origin and everything when the
 *   list holds "*", and does not depend on letter case (RFC 6454 origins
 *   compare scheme and host case-insensitively).
 */
#include "fuzz.h"

#include <ctype.h>
#include <stdbool.h>
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

static char *upper_copy(const char *s)
{
    size_t n = strlen(s);
    char *u = malloc(n + 1);
    LC_FUZZ_CHECK(u != NULL, "out of memory");
    for (size_t i = 0; i <= n; i++)
        u[i] = (char)toupper((unsigned char)s[i]);
    return u;
}

static void check_origin(const lc_server_config *cfg, const char *origin, const char *host)
{
    bool any = false;
    for (const char *p = cfg->allow_origin; *p; p++)
        any |= *p == '*';
    char *uo = upper_copy(origin), *uh = upper_copy(host);
    for (int tls = 0; tls < 2; tls++) {
        bool ok = lc_origin_allowed(cfg->allow_origin, origin, host, tls);
        LC_FUZZ_CHECK(ok || (origin[0] && !any), "origin '%s' refused with allow '%s'", origin,
                      cfg->allow_origin);
        LC_FUZZ_CHECK(lc_origin_allowed(cfg->allow_origin, uo, uh, tls) == ok,
                      "origin '%s' host '%s': the answer depends on case", origin, host);
    }
    free(uo);
    free(uh);
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
        const char *origin = next_piece(&p, end), *host = next_piece(&p, end);
        const char *flag;
        while ((flag = next_piece(&p, end)) != NULL) {
            const char *value = next_piece(&p, end);
            err[0] = '\0';
            int frc = lc_server_config_flag(&cfg, flag, value, err, sizeof err);
            LC_FUZZ_CHECK(frc == 1 || frc == 0 || (frc == -1 && err[0]),
                          "flag '%s' returned %d, reason '%s'", flag, frc, err);
        }
        check_print_round_trip(&cfg);
        check_origin(&cfg, origin ? origin : "", host ? host : "");
        free(args);
    }
    return 0;
}
