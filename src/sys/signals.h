/*
 * signals.h - installing signal handlers the same way everywhere (the
 * server's stop and reopen, `lacuna sim --connect`'s Ctrl-C): no
 * SA_RESTART, so a blocking call returns EINTR and the loop sees the flag
 * its handler set; no other signal blocked while a handler runs.
 */
#ifndef LC_SIGNALS_H
#define LC_SIGNALS_H

/* Installs handler for each of the n signals in sigs. */
void lc_signals_catch(void (*handler)(int), const int *sigs, int n);

#endif
