/* numparse.c - strict finite decimal numbers. */
#include "common/numparse.h"

#include <ctype.h>
#include <errno.h>
#include <math.h>
#include <stdlib.h>

int lw_parse_number(const char *s, double *out)
{
    const char *p = s;
    while (isspace((unsigned char)*p))
        p++;
    const char *start = p;
    if (*p == '+' || *p == '-')
        p++;
    int digits = 0;
    while (isdigit((unsigned char)*p)) {
        p++;
        digits++;
    }
    if (*p == '.') {
        p++;
        while (isdigit((unsigned char)*p)) {
            p++;
            digits++;
        }
    }
    if (!digits)
        return -1;
    if (*p == 'e' || *p == 'E') {
        p++;
        if (*p == '+' || *p == '-')
            p++;
        if (!isdigit((unsigned char)*p))
            return -1;
        while (isdigit((unsigned char)*p))
            p++;
    }
    const char *end = p;
    while (isspace((unsigned char)*p))
        p++;
    if (*p)
        return -1;
    errno = 0;
    char *stop = NULL;
    double v = strtod(start, &stop);
    if (stop != end)
        return -1;
    if (!isfinite(v))
        return -2;
    if (errno == ERANGE && fabs(v) > 1.0)
        return -2;
    *out = v == 0.0 ? 0.0 : v;
    return 0;
}
