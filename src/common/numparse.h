/* numparse.h - strict number syntax shared by the model and log readers. */
#ifndef LW_NUMPARSE_H
#define LW_NUMPARSE_H

/* Parse a finite decimal ("0.01", "1e-3", " 400 ").  Surrounding white
 * space is allowed; anything else (nan, inf, 0x10, "1e999", trailing text,
 * empty) is rejected.  Returns 0 on success, -1 on bad syntax, -2 when the
 * value is too large for a double.  -0 is returned as +0. */
int lw_parse_number(const char *s, double *out);

#endif
