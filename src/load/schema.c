/* schema.c - validate a parsed model against the built-in schema. */
#include "load/schema.h"

#include <libxml/xmlschemas.h>
#include <string.h>

#include "layerwise/model.h"

extern const char lw_schema_xsd[];      /* generated from docs/model.xsd */

const char *lw_model_schema(void) { return lw_schema_xsd; }

int lw_schema_validate(xmlDocPtr doc)
{
    xmlSchemaParserCtxtPtr pctx =
        xmlSchemaNewMemParserCtxt(lw_schema_xsd, (int)strlen(lw_schema_xsd));
    if (!pctx)
        return -1;
    xmlSchemaPtr schema = xmlSchemaParse(pctx);
    xmlSchemaFreeParserCtxt(pctx);
    if (!schema)
        return -1;
    xmlSchemaValidCtxtPtr vctx = xmlSchemaNewValidCtxt(schema);
    if (!vctx) {
        xmlSchemaFree(schema);
        return -1;
    }
    int rc = xmlSchemaValidateDoc(vctx, doc);
    xmlSchemaFreeValidCtxt(vctx);
    xmlSchemaFree(schema);
    return rc == 0 ? 0 : (rc > 0 ? 1 : -1);
}
