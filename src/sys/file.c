/* file.c - see file.h. */
#include "file.h"

#include <errno.h>
#include <stdbool.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "cli.h"

char *lc_file_read(const char *path, size_t *len)
{
    FILE *f = strcmp(path, "-") == 0 ? stdin : fopen(path, "rb");
    if (!f)
        return NULL;
    struct stat st;
    if (fstat(fileno(f), &st) == 0 && S_ISDIR(st.st_mode)) {
        if (f != stdin)
            fclose(f);
        errno = EISDIR; /* fopen takes a directory; reading it fails with EIO */
        return NULL;
    }
    size_t cap = 65536, n = 0;
    char *buf = malloc(cap);
    while (buf) {
        if (n + 1 >= cap) {
            char *nb = realloc(buf, cap * 2);
            if (!nb) {
                free(buf);
                buf = NULL;
                break;
            }
            buf = nb;
            cap *= 2;
        }
        size_t got = fread(buf + n, 1, cap - n - 1, f);
        n += got;
        if (got == 0)
            break;
    }
    int err = ferror(f) ? EIO : 0;
    if (f != stdin)
        fclose(f);
    if (buf && err) {
        free(buf);
        errno = err;
        return NULL;
    }
    if (buf) {
        buf[n] = '\0';
        if (len)
            *len = n;
    }
    return buf;
}

int lc_file_read_token(const char *cmd, const char *path, int max, char *out, size_t n)
{
    size_t len = 0;
    char *text = lc_file_read(path, &len);
    if (!text)
        return lc_cli_usage_error(cmd, "token file %s: %s", path, strerror(errno));
    while (len && (text[len - 1] == '\n' || text[len - 1] == '\r' || text[len - 1] == ' ' ||
                   text[len - 1] == '\t'))
        text[--len] = '\0';
    bool ok = len > 0 && len <= (size_t)max && len < n;
    for (size_t i = 0; ok && i < len; i++)
        ok = text[i] >= 0x20 && text[i] <= 0x7e;
    if (ok)
        memcpy(out, text, len + 1);
    free(text);
    if (!ok)
        return lc_cli_usage_error(cmd, "token file %s: must hold 1 to %d printable ASCII characters",
                                  path, max);
    return 0;
}
