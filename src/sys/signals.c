/* signals.c - see signals.h. */
#include "signals.h"

#include <signal.h>
#include <string.h>

void lc_signals_catch(void (*handler)(int), const int *sigs, int n)
{
    struct sigaction sa;
    memset(&sa, 0, sizeof sa);
    sa.sa_handler = handler;
    sigemptyset(&sa.sa_mask);
    for (int i = 0; i < n; i++)
        sigaction(sigs[i], &sa, NULL);
}
