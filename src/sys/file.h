/*
 * file.h - reading the files a command is given: a whole file (a request,
 * a scenario, the server's --config) and a token file (a shared secret).
 * The caller owns what is returned.
 */
#ifndef LC_FILE_H
#define LC_FILE_H

#include <stddef.h>

/*
 * Reads a whole file ("-" is stdin) into a NUL-terminated buffer (free it);
 * len (may be NULL) gets its length. NULL with errno set when it cannot be
 * read (EISDIR for a directory) or memory runs out.
 */
char *lc_file_read(const char *path, size_t *len);

/*
 * A token file: one line of 1 to max printable ASCII characters; trailing
 * white space ignored. 0, or LC_EXIT_USAGE with the reason printed for cmd
 * (cli.h). out holds at least max + 2 bytes (n).
 */
int lc_file_read_token(const char *cmd, const char *path, int max, char *out, size_t n);

#endif
