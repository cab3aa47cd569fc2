/*
 * log.c - see log.h. Each record is written with one fprintf and flushed,
 * so that lines from a crash are complete.
 */
#include "log.h"

#include <stdarg.h>
#include <stdio.h>
#include <string.h>
#include <time.h>

static const char *const level_names[LC_LOG_LEVEL_COUNT] = {"error", "warn", "info", "debug"};

static struct {
    lc_log_level level;
    FILE *file; /* NULL: stderr */
    char path[4096];
} logger = {LC_LOG_INFO, NULL, ""};

bool lc_log_level_from_name(const char *name, lc_log_level *out)
{
    for (int i = 0; i < LC_LOG_LEVEL_COUNT; i++) {
        if (strcmp(name, level_names[i]) == 0) {
            *out = (lc_log_level)i;
            return true;
        }
    }
    return false;
}

const char *lc_log_level_name(lc_log_level level)
{
    return level >= 0 && level < LC_LOG_LEVEL_COUNT ? level_names[level] : "?";
}

int lc_log_open(lc_log_level level, const char *path)
{
    lc_log_close();
    logger.level = level;
    snprintf(logger.path, sizeof logger.path, "%s", path ? path : "");
    return lc_log_reopen();
}

int lc_log_reopen(void)
{
    if (logger.path[0] == '\0')
        return 0;
    if (logger.file)
        fclose(logger.file);
    logger.file = fopen(logger.path, "a");
    return logger.file ? 0 : -1;
}

void lc_log_close(void)
{
    if (logger.file)
        fclose(logger.file);
    logger.file = NULL;
}

bool lc_log_enabled(lc_log_level level) { return level <= logger.level; }

void lc_log(lc_log_level level, const char *fmt, ...)
{
    if (!lc_log_enabled(level))
        return;
    char text[1024];
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(text, sizeof text, fmt, ap);
    va_end(ap);
    FILE *out = logger.file ? logger.file : stderr;
    if (logger.file) {
        char when[32];
        time_t now = time(NULL);
        struct tm tm;
        gmtime_r(&now, &tm);
        strftime(when, sizeof when, "%Y-%m-%dT%H:%M:%SZ", &tm);
        fprintf(out, "%s lacuna serve: %s: %s\n", when, level_names[level], text);
    } else {
        fprintf(out, "lacuna serve: %s: %s\n", level_names[level], text);
    }
    fflush(out);
}
