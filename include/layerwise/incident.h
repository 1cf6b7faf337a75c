/*
 * layerwise/incident.h - post-incident analysis (analysis room).
 *
 * The observation names events that happened (--failed) and events that
 * did not (--held).  Each event is taken as modelled, i.e. its gate in the
 * compiled network, so a common-cause member is (part OR common:G) and a
 * dependence second is (part OR (first AND depends:D)).  Then, on the
 * hazard's BDD manager (lw_prepare orders every event after the hazard's
 * variables, so every event gate lives in the same manager):
 *
 *   obs  = AND over failed of gate(e)  AND  AND over held of NOT gate(e)
 *   P(hazard | obs) = P(hazard AND obs) / P(obs)            (exact)
 *
 * and, from one Birnbaum pass over obs, the posterior P(v | obs) of every
 * variable (P(v AND obs) = q_v * P(obs | v true), and P(obs) is linear in
 * q_v).
 *
 * Cut-set classes (docs/cli.md).  A variable of a minimal cut set COUNTS
 * AS FAILED when: a user event's variable (for a group member or a
 * dependence second, its independent part, named by the event id) - the
 * event is listed in failed; common:G - at least two members of G are
 * listed; depends:D - both its first and its second are listed.  A
 * variable is HELD when it is a user event listed in held (synthetic
 * variables are never held as such; their posterior shows when the
 * observation rules them out).
 *   completed: every variable counts as failed;
 *   one_away:  exactly one does not count as failed and it is not held;
 *   blocked:   at least one is held, and at most one of the others does
 *              not count as failed (held layers stopped a chain the
 *              observation otherwise completes, or would with one more
 *              event).
 * one_away and blocked sets are the "near" sets.  stood = the held
 * safeguards of blocked sets and the untouched safeguard each one_away set
 * misses.
 * The sets are found without enumerating the whole family: the minimal
 * cut sets with at most one variable outside (failed or held) are built
 * directly as a ZBDD by the decomposition of cutsets.c restricted by that
 * budget, then walked.
 */
#ifndef LAYERWISE_INCIDENT_H
#define LAYERWISE_INCIDENT_H

#include "layerwise/analysis.h"

#ifdef __cplusplus
extern "C" {
#endif

typedef enum lw_incident_class {
    LW_INC_COMPLETED,       /* every event counts as failed */
    LW_INC_ONE_AWAY,        /* one untouched event would complete it */
    LW_INC_BLOCKED          /* held layers stand in the way */
} lw_incident_class;

typedef struct lw_incident_set {
    lw_incident_class cls;
    size_t order;
    uint32_t *vars;         /* network variables, sorted by name */
    double probability;     /* prior: product of the variables' p */
    uint32_t missing;       /* the one untouched variable (one_away: it
                               would complete the set), or UINT32_MAX */
    double missing_p;       /* its prior p */
    double missing_given;   /* P(missing | observation) */
    size_t nheld;           /* held variables in the set */
} lw_incident_set;

typedef struct lw_incident_stood {
    size_t node;            /* model safeguard */
    uint32_t var;           /* its (independent part) variable */
    bool held;              /* listed in held; else untouched */
    size_t sets;            /* near sets it stands in */
    double p;               /* its miss probability as modelled */
    double given;           /* P(it missed | observation); 0 when held */
} lw_incident_stood;

typedef enum lw_strain_kind {
    LW_STRAIN_PAIR,         /* two failed safeguards; see 'linked' */
    LW_STRAIN_SMALL_P       /* a failed safeguard the model thinks rare */
} lw_strain_kind;

typedef struct lw_incident_strain {
    lw_strain_kind kind;
    size_t a, b;            /* model nodes (b = LW_NONE for SMALL_P) */
    bool linked;            /* PAIR: the model makes them dependent */
    double p_a, p_b;        /* marginal miss probabilities as modelled */
    double joint_model;     /* PAIR: P(a and b) under the model */
    double joint_independent;   /* PAIR: p_a * p_b */
} lw_incident_strain;

/* A synthetic variable (common:G, depends:D) the failed events touch. */
typedef struct lw_incident_link {
    uint32_t var;
    double prior;           /* its p */
    double given;           /* P(var | observation) */
} lw_incident_link;

/* Below this miss probability a failed safeguard is flagged as possibly
 * optimistic (1 in 100; a rule of thumb, not a test). */
#define LW_INCIDENT_SMALL_P 0.01

typedef struct lw_incident {
    size_t hazard, variant;
    size_t nfailed, nheld;
    size_t *failed, *held;      /* model nodes, in the order given */
    double prior;               /* P(hazard) */
    double p_observation;       /* P(obs) */
    double p_joint;             /* P(hazard and obs) */
    double conditional;         /* P(hazard | obs) */
    double misses_model;        /* P(all failed events) under the model */
    double misses_independent;  /* product of their marginals */
    /* cut sets: completed first, then one_away, then blocked; each
     * class sorted by probability, highest first */
    size_t ncompleted, none_away, nblocked;
    lw_incident_set *sets;      /* ncompleted + none_away + nblocked */
    bool truncated;             /* more near sets than the listing cap */
    size_t nstood;
    lw_incident_stood *stood;   /* held first, then by sets */
    size_t nstrains;
    lw_incident_strain *strains;
    size_t nlinks;
    lw_incident_link *links;
    unsigned char *in_hazard;   /* per network variable: 1 when the
                                   hazard's structure reaches it */
    const lw_network *net;      /* names the variables (borrowed) */
    lw_prepared *owned;         /* kept alive for 'net' by lw_incident_run */
} lw_incident;

/* Most near sets listed (enumeration stops there; 'truncated' is set). */
#define LW_INCIDENT_MAX_SETS 100000

/* Resolve the ids and run the analysis.  Unknown ids, ids that are not
 * error or safeguard events, and an id both failed and held are
 * LW_EUSAGE (the message lists the model's events).  An observation with
 * probability 0 under the model is LW_EMODEL, saying which events make it
 * impossible. */
lw_status lw_incident_run(const lw_model *m, size_t variant, size_t hazard,
                          const char *const *failed, size_t nfailed,
                          const char *const *held, size_t nheld,
                          const lw_options *opt, lw_incident **out,
                          lw_error *err);
/* The same on a prepared hazard ('p' keeps ownership; its builder gains
 * the observation's nodes). */
lw_status lw_incident_prepared(lw_prepared *p, const size_t *failed,
                               size_t nfailed, const size_t *held,
                               size_t nheld, lw_incident **out,
                               lw_error *err);
/* Check one id list against the model: fills 'nodes' (room for n). */
lw_status lw_incident_resolve(const lw_model *m, const char *what,
                              const char *const *ids, size_t n,
                              size_t *nodes, lw_error *err);
void lw_incident_free(lw_incident *r);

const lw_incident_set *lw_incident_completed(const lw_incident *r);
const lw_incident_set *lw_incident_one_away(const lw_incident *r);
const lw_incident_set *lw_incident_blocked(const lw_incident *r);

#ifdef __cplusplus
}
#endif
#endif
