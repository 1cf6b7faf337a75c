/* schema.h - the model schema (docs/model.xsd) compiled into the library. */
#ifndef LW_LOAD_SCHEMA_H
#define LW_LOAD_SCHEMA_H

#include <libxml/tree.h>

/* Validate 'doc'; errors go to libxml2's structured error handler that the
 * caller installed.  Returns 0 when valid, 1 when invalid, -1 when the
 * schema itself could not be set up. */
int lw_schema_validate(xmlDocPtr doc);

#endif
