/* schema.c - validate a parsed model against the built-in schema. */
#include "load/schema.h"

#include <libxml/xmlschemas.h>
#include <stdint.h>
#include <string.h>

#include "layerwise/model.h"

extern const char lw_schema_xsd[];      /* generated from docs/model.xsd */

const char *lw_model_schema(void) { return lw_schema_xsd; }

static xmlSchemaPtr load_schema(void)
{
    xmlSchemaParserCtxtPtr pctx =
        xmlSchemaNewMemParserCtxt(lw_schema_xsd, (int)strlen(lw_schema_xsd));
    if (!pctx)
        return NULL;
    xmlSchemaPtr schema = xmlSchemaParse(pctx);
    xmlSchemaFreeParserCtxt(pctx);
    return schema;
}

int lw_schema_validate(xmlDocPtr doc)
{
    xmlSchemaPtr schema = load_schema();
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

int lw_schema_validate_bytes(const char *data, size_t len)
{
    if (len > INT32_MAX)
        return -1;
    xmlSchemaPtr schema = load_schema();
    if (!schema)
        return -1;
    xmlSchemaValidCtxtPtr vctx = xmlSchemaNewValidCtxt(schema);
    /* a copy of the bytes: libxml2's static buffers do not stream */
    xmlParserInputBufferPtr in =
        vctx ? xmlParserInputBufferCreateMem(data, (int)len,
                                             XML_CHAR_ENCODING_NONE)
             : NULL;
    int rc = -1;
    if (in)     /* the validator takes the buffer over */
        rc = xmlSchemaValidateStream(vctx, in, XML_CHAR_ENCODING_NONE, NULL,
                                     NULL);
    xmlSchemaFreeValidCtxt(vctx);
    xmlSchemaFree(schema);
    return rc == 0 ? 0 : (rc > 0 ? 1 : -1);
}
