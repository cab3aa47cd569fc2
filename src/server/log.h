/*
 * log.h - the daemon's log: levels, one line per record, stderr by default.
 *
 * A record is "lacuna serve: <level>: <text>" on one line. A log file, when
 * configured, is opened in append mode and reopened by lc_log_reopen (after
 * SIGHUP, for log rotation). The state is one process-wide logger: the
 * daemon has one event loop and one thread.
 */
#ifndef LC_LOG_H
#define LC_LOG_H

#include <stdbool.h>

typedef enum lc_log_level {
    LC_LOG_ERROR = 0,
    LC_LOG_WARN,
    LC_LOG_INFO,
    LC_LOG_DEBUG,
    LC_LOG_LEVEL_COUNT
} lc_log_level;

/* "error", "warn", "info", "debug"; false when the name is none of them. */
bool lc_log_level_from_name(const char *name, lc_log_level *out);
const char *lc_log_level_name(lc_log_level level);

/* path NULL or "": stderr. Returns 0, or -1 when the file cannot be opened. */
int lc_log_open(lc_log_level level, const char *path);
/* Reopen the log file (no-op on stderr); 0 or -1 (then stderr is used). */
int lc_log_reopen(void);
void lc_log_close(void);
bool lc_log_enabled(lc_log_level level);

void lc_log(lc_log_level level, const char *fmt, ...) __attribute__((format(printf, 2, 3)));

#endif
