/*
 * layerwise/model.h - the load room: a safety model exactly as written.
 *
 * lw_model_load reads one XML document (model-format version 1), checks its
 * structure against the schema compiled into the library (docs/model.xsd)
 * and its meaning in code (ids, references, cycles, ranges, groups,
 * dependences, variants), and returns an lw_model.  Every error found is
 * recorded with its file and line, up to the lw_error limit.
 *
 * The model is a flat array of nodes.  Events (error, safeguard, condition),
 * gates (all, any, vote), blocks and hazards are all nodes; a gate's inputs
 * are node indices with every `ref` already resolved, so shared subtrees
 * make the node graph a DAG.  Indices, not pointers, cross-reference
 * everything, and lw_model_free releases the whole model in one call.
 */
#ifndef LAYERWISE_MODEL_H
#define LAYERWISE_MODEL_H

#include <stdbool.h>
#include <stddef.h>

#include "layerwise/error.h"

#ifdef __cplusplus
extern "C" {
#endif

typedef enum lw_node_kind {
    LW_NODE_ERROR,      /* an error that starts a chain */
    LW_NODE_SAFEGUARD,  /* a verification layer; p = chance it misses */
    LW_NODE_CONDITION,  /* a switch, true or false (house event) */
    LW_NODE_ALL,        /* AND gate */
    LW_NODE_ANY,        /* OR gate */
    LW_NODE_VOTE,       /* k-of-n gate */
    LW_NODE_BLOCK,      /* named reusable logic, one input */
    LW_NODE_HAZARD      /* top event, one input */
} lw_node_kind;

typedef enum lw_dist_kind {
    LW_DIST_POINT,      /* p only */
    LW_DIST_LOGNORMAL,  /* mean p, error factor ef */
    LW_DIST_BETA,       /* Beta(a, b); p is its mean */
    LW_DIST_UNIFORM,    /* uniform on [low, high]; p as written */
    LW_DIST_OBSERVED    /* count of 'of'; p = Jeffreys mean */
} lw_dist_kind;

/* The probability of an event and what is known of its uncertainty. */
typedef struct lw_dist {
    lw_dist_kind kind;
    double p;           /* point value used by exact analysis */
    double ef;          /* LOGNORMAL: error factor (95th / 50th pct) >= 1 */
    double a, b;        /* BETA: shape parameters > 0 */
    double low, high;   /* UNIFORM: bounds in [0, 1] */
    double count, of;   /* OBSERVED: misses and trials (whole numbers) */
    char *source;       /* OBSERVED: where the counts come from, or NULL */
} lw_dist;

typedef struct lw_node {
    lw_node_kind kind;
    char *id;           /* NULL for an anonymous gate */
    char *label;        /* may be NULL */
    char *source;       /* optional evidence note (events), or NULL */
    long line;          /* line of the defining element */
    /* gates, blocks, hazards */
    int k;              /* VOTE: inputs that must be true */
    size_t nin;         /* number of inputs */
    size_t *in;         /* input node indices (refs resolved) */
    /* events */
    lw_dist dist;       /* ERROR, SAFEGUARD */
    bool present;       /* SAFEGUARD: false = absent layer, p = 1 */
    bool state;         /* CONDITION */
    /* hazards */
    bool has_tolerable;
    double tolerable;   /* per exposure unit */
} lw_node;

typedef struct lw_group {           /* <common-cause> */
    char *id;
    char *label;
    long line;
    double beta;        /* in [0, 1] */
    size_t nmembers;
    size_t *members;    /* event node indices */
} lw_group;

typedef enum lw_level {
    LW_LEVEL_ZERO, LW_LEVEL_LOW, LW_LEVEL_MODERATE, LW_LEVEL_HIGH,
    LW_LEVEL_COMPLETE
} lw_level;

typedef struct lw_dependence {      /* <dependence> */
    char *id;           /* may be NULL; then named after first and second */
    long line;
    size_t first;       /* event node index */
    size_t second;      /* event node index */
    lw_level level;
} lw_dependence;

typedef enum lw_set_attr {
    LW_SET_P, LW_SET_PRESENT, LW_SET_STATE, LW_SET_BETA, LW_SET_LEVEL
} lw_set_attr;

typedef enum lw_target_kind { LW_TARGET_NODE, LW_TARGET_GROUP,
                              LW_TARGET_DEPENDENCE } lw_target_kind;

typedef struct lw_set {             /* <set> inside a <variant> */
    long line;
    lw_target_kind target_kind;
    size_t target;      /* index into nodes, groups or dependences */
    lw_set_attr attr;
    double number;      /* P, BETA */
    bool flag;          /* PRESENT, STATE */
    lw_level level;     /* LEVEL */
} lw_set;

typedef struct lw_variant {
    char *id;
    char *label;
    long line;
    size_t nsets;
    lw_set *sets;
} lw_variant;

typedef struct lw_model {
    char *file;         /* name used in messages */
    char *id;
    char *title;
    char *description;
    bool has_exposure;
    char *exposure_unit;
    double per_year;
    size_t nnodes;
    lw_node *nodes;
    size_t ngroups;
    lw_group *groups;
    size_t ndeps;
    lw_dependence *deps;
    size_t nvariants;
    lw_variant *variants;
    size_t nhazards;
    size_t *hazards;    /* node indices of hazards, in document order */
    size_t nwarnings;
    char **warnings;    /* "FILE:LINE: text" strings, owned */
    bool streamed;      /* read as a stream, without a document tree */
} lw_model;

/* The largest nesting a caller may allow (deeper models are cut into
 * blocks and refs anyway; each level costs stack in the builders). */
#define LW_MAX_DEPTH_LIMIT 100000u
#define LW_MAX_DEPTH_LIMIT_TEXT "100000"

/* Limits the loader enforces; zero fields take the defaults. */
typedef struct lw_load_limits {
    size_t max_bytes;       /* file size, default 64 MiB */
    size_t max_text;        /* one label/description/source, default 64 KiB */
    size_t max_nodes;       /* events + gates, default 5,000,000 */
    unsigned max_depth;     /* element nesting (the root element is 1),
                               default 256, at most LW_MAX_DEPTH_LIMIT */
    size_t stream_from;     /* files of this many bytes or more are first
                               read as a stream, without a document tree
                               (the same model and messages, less time and
                               memory); default 1 MiB, SIZE_MAX never */
} lw_load_limits;

/* Load from memory.  'name' is used in messages ("-" reads as "<stdin>").
 * On success *out owns a new model; on failure *out is NULL and 'err'
 * holds every problem found. */
lw_status lw_model_load_memory(const char *data, size_t len, const char *name,
                               const lw_load_limits *limits, lw_model **out,
                               lw_error *err);
/* Load a file, or standard input when 'path' is "-". */
lw_status lw_model_load_file(const char *path, const lw_load_limits *limits,
                             lw_model **out, lw_error *err);
void lw_model_free(lw_model *m);

/* Look-ups; return (size_t)-1 when not found. */
size_t lw_model_find_node(const lw_model *m, const char *id);
size_t lw_model_find_variant(const lw_model *m, const char *id);
size_t lw_model_find_hazard(const lw_model *m, const char *id);

bool lw_node_is_event(lw_node_kind k);
bool lw_node_is_gate(lw_node_kind k);
const char *lw_node_kind_name(lw_node_kind k);
const char *lw_level_name(lw_level l);
/* THERP dependence weight: 0, 1/20, 1/7, 1/2, 1 (NUREG/CR-1278 ch. 10). */
double lw_level_weight(lw_level l);

/* The schema compiled into the library (docs/model.xsd), NUL-terminated. */
const char *lw_model_schema(void);

#define LW_NONE ((size_t)-1)

#ifdef __cplusplus
}
#endif
#endif
