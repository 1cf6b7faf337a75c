/* schema.h - the model schema (docs/model.xsd) compiled into the library. */
#ifndef LW_LOAD_SCHEMA_H
#define LW_LOAD_SCHEMA_H

#include <libxml/tree.h>
#include <stddef.h>

/* Validate 'doc'; errors go to libxml2's structured error handler that the
 * caller installed.  Returns 0 when valid, 1 when invalid, -1 when the
 * schema itself could not be set up. */
int lw_schema_validate(xmlDocPtr doc);
/* The same for a document still in bytes, parsed as it is validated (no
 * tree); parse errors count as invalid.  The caller makes sure that the
 * document has no DOCTYPE. */
int lw_schema_validate_bytes(const char *data, size_t len);

#endif
