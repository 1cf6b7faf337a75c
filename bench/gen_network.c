/*
 * lw-gen: seeded generator of layered-safeguard networks for benchmarking.
 *
 *   lw-gen --events N --seed S [-o FILE]
 *
 * Writes a model in the project's XML model format (format="1").  The network
 * is built from "paths": each path is an `all` of one error and 2-5 safeguard
 * slots.  A slot is a new safeguard, a safeguard reused from one of the last
 * REUSE_WINDOW paths (so the model is a DAG, not a tree), or a small `vote`
 * (k-of-3 or 2-of-4) over safeguards.  Paths are grouped into `any`
 * sub-systems, sub-systems into blocks, and the single hazard is the `any` of
 * all blocks.  Every event is defined once at the root; logic uses `ref`.
 *
 * N counts error + safeguard events exactly.  The generator uses its own PRNG
 * (splitmix64 seeding xoshiro256**) and only IEEE basic arithmetic (no libm),
 * so a given (N, seed) produces byte-identical output on every machine.
 */
#include <errno.h>
#include <inttypes.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* ---- tunables ---------------------------------------------------------- */
#define REUSE_WINDOW 20       /* reuse safeguards from the last 20 paths   */
#define REUSE_PCT 10          /* % of safeguard slots that reuse one       */
#define VOTE_PCT 5            /* % of safeguard slots that become a vote   */
#define MIN_SLOTS 2
#define MAX_SLOTS 5
#define PATHS_PER_SUB_MIN 3
#define PATHS_PER_SUB_MAX 8
#define SUBS_PER_BLOCK_MIN 3
#define SUBS_PER_BLOCK_MAX 8

/* ---- PRNG -------------------------------------------------------------- */
static uint64_t splitmix64(uint64_t *x)
{
    uint64_t z = (*x += UINT64_C(0x9E3779B97F4A7C15));
    z = (z ^ (z >> 30)) * UINT64_C(0xBF58476D1CE4E5B9);
    z = (z ^ (z >> 27)) * UINT64_C(0x94D049BB133111EB);
    return z ^ (z >> 31);
}

static uint64_t rng_s[4];

static uint64_t rotl(uint64_t x, int k) { return (x << k) | (x >> (64 - k)); }

static uint64_t rng_next(void)
{
    uint64_t result = rotl(rng_s[1] * 5, 7) * 9;
    uint64_t t = rng_s[1] << 17;
    rng_s[2] ^= rng_s[0];
    rng_s[3] ^= rng_s[1];
    rng_s[1] ^= rng_s[2];
    rng_s[0] ^= rng_s[3];
    rng_s[2] ^= t;
    rng_s[3] = rotl(rng_s[3], 45);
    return result;
}

static void rng_seed(uint64_t seed)
{
    uint64_t x = seed;
    for (int i = 0; i < 4; i++)
        rng_s[i] = splitmix64(&x);
}

/* uniform integer in [0, n), n >= 1, unbiased (rejection) */
static uint64_t rng_below(uint64_t n)
{
    uint64_t limit = UINT64_MAX - (UINT64_MAX % n);
    uint64_t r;
    do {
        r = rng_next();
    } while (r >= limit);
    return r % n;
}

static int rng_range(int lo, int hi) /* inclusive */
{
    return lo + (int)rng_below((uint64_t)(hi - lo + 1));
}

static double rng_unit(void) /* [0, 1) */
{
    return (double)(rng_next() >> 11) * (1.0 / 9007199254740992.0);
}

static int rng_pct(int pct) { return (int)rng_below(100) < pct; }

/* exp(x) for 0 <= x <= ~5 using only + - * /, hence bit-reproducible. */
static double det_exp(double x)
{
    double y = x / 16.0, term = 1.0, sum = 1.0;
    for (int i = 1; i <= 24; i++) {
        term = term * y / (double)i;
        sum += term;
    }
    for (int i = 0; i < 4; i++)
        sum *= sum;
    return sum;
}

/* log-uniform on [lo, hi]; ln_ratio = ln(hi / lo) supplied as a constant */
static double log_uniform(double lo, double ln_ratio)
{
    return lo * det_exp(rng_unit() * ln_ratio);
}

#define LN_100 4.6051701859880913680 /* errors: 1e-4 .. 1e-2 */
#define LN_30 3.4011973816621553754  /* safeguards: 0.01 .. 0.3 */

/* ---- growable int vector ------------------------------------------------ */
typedef struct {
    int *v;
    size_t n, cap;
} ivec;

static void die_oom(void)
{
    fprintf(stderr, "lw-gen: out of memory\n");
    exit(1);
}

static void ivec_push(ivec *a, int x)
{
    if (a->n == a->cap) {
        size_t nc = a->cap ? a->cap * 2 : 16;
        int *nv = realloc(a->v, nc * sizeof *nv);
        if (!nv)
            die_oom();
        a->v = nv;
        a->cap = nc;
    }
    a->v[a->n++] = x;
}

/* ---- model in memory ----------------------------------------------------- */
/* events: index i; kind 'e' or 's'; ordinal = number within kind (1-based) */
typedef struct {
    char kind;
    int ordinal;
    double p;
} event;

static event *events;
static int n_events, cap_events;
static int n_errors, n_safeguards;

static int new_event(char kind)
{
    if (n_events == cap_events) {
        int nc = cap_events ? cap_events * 2 : 1024;
        event *ne = realloc(events, (size_t)nc * sizeof *ne);
        if (!ne)
            die_oom();
        events = ne;
        cap_events = nc;
    }
    event *e = &events[n_events];
    e->kind = kind;
    if (kind == 'e') {
        e->ordinal = ++n_errors;
        e->p = log_uniform(1e-4, LN_100);
    } else {
        e->ordinal = ++n_safeguards;
        e->p = log_uniform(0.01, LN_30);
    }
    return n_events++;
}

/*
 * A path is encoded in one int stream `code`:
 *   path start: error event index
 *   then items: x >= 0 -> ref to event x
 *               x == -1 -> vote follows: k, n, then n event indices
 *   path end: -2
 */
static ivec code;
static ivec path_start;   /* offset in code of each path */
static ivec path_sg;      /* all safeguards of all paths, flattened */
static ivec path_sg_off;  /* offset into path_sg per path (n_paths + 1) */

static int in_list(const int *a, size_t n, int x)
{
    for (size_t i = 0; i < n; i++)
        if (a[i] == x)
            return 1;
    return 0;
}

/* Pick a safeguard used by one of the last REUSE_WINDOW paths, not in used[]. */
static int pick_reuse(int cur_path, const int *used, size_t n_used)
{
    if (cur_path == 0)
        return -1;
    int lo = cur_path - REUSE_WINDOW;
    if (lo < 0)
        lo = 0;
    for (int attempt = 0; attempt < 8; attempt++) {
        int pth = rng_range(lo, cur_path - 1);
        int a = path_sg_off.v[pth], b = path_sg_off.v[pth + 1];
        if (b <= a)
            continue;
        int sg = path_sg.v[a + (int)rng_below((uint64_t)(b - a))];
        if (!in_list(used, n_used, sg))
            return sg;
    }
    return -1;
}

static void generate(long target)
{
    long remaining = target;
    int used[64];
    ivec_push(&path_sg_off, 0);
    while (remaining > 0) {
        int pth = (int)path_start.n;
        size_t n_used = 0;
        ivec_push(&path_start, (int)code.n);
        ivec_push(&code, new_event('e'));
        remaining--;
        int slots = rng_range(MIN_SLOTS, MAX_SLOTS);
        int placed = 0;
        for (int s = 0; s < slots; s++) {
            if (rng_pct(VOTE_PCT) && remaining >= 4) {
                int n, k;
                if (rng_below(2) == 0) {
                    n = 3;
                    int r = (int)rng_below(5); /* k: 1 (1/5), 2 (3/5), 3 (1/5) */
                    k = r == 0 ? 1 : (r == 4 ? 3 : 2);
                } else {
                    n = 4;
                    k = 2;
                }
                ivec_push(&code, -1);
                ivec_push(&code, k);
                ivec_push(&code, n);
                for (int j = 0; j < n; j++) {
                    int sg = -1;
                    if (rng_pct(REUSE_PCT))
                        sg = pick_reuse(pth, used, n_used);
                    if (sg < 0) {
                        sg = new_event('s');
                        remaining--;
                    }
                    used[n_used++] = sg;
                    ivec_push(&code, sg);
                }
                placed++;
                continue;
            }
            int sg = -1;
            if (rng_pct(REUSE_PCT) || remaining == 0)
                sg = pick_reuse(pth, used, n_used);
            if (sg < 0 && remaining > 0) {
                sg = new_event('s');
                remaining--;
            }
            if (sg < 0)
                continue; /* out of budget and nothing to reuse */
            used[n_used++] = sg;
            ivec_push(&code, sg);
            placed++;
        }
        (void)placed;
        ivec_push(&code, -2);
        for (size_t i = 0; i < n_used; i++)
            ivec_push(&path_sg, used[i]);
        ivec_push(&path_sg_off, (int)path_sg.n);
    }
}

/* ---- output ---------------------------------------------------------------- */
static void put_id(FILE *f, int ev)
{
    fprintf(f, "%c%d", events[ev].kind, events[ev].ordinal);
}

static void emit(FILE *f, long target, uint64_t seed)
{
    fprintf(f, "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n");
    fprintf(f, "<safety-model format=\"1\" id=\"generated-n%ld-s%" PRIu64 "\">\n",
            target, seed);
    fprintf(f, "  <title>Generated layered-safeguard network (%ld events, seed %" PRIu64
               ")</title>\n",
            target, seed);
    fprintf(f, "  <description>Synthetic benchmark model written by lw-gen: %zu paths, "
               "each an error followed by 2-5 safeguard layers; some safeguards are "
               "shared between nearby paths and some layers are voting groups. "
               "Not a real process.</description>\n",
            path_start.n);

    for (int i = 0; i < n_events; i++) {
        const event *e = &events[i];
        if (e->kind == 'e')
            fprintf(f, "  <error id=\"e%d\" label=\"Error %d starts a harmful chain\" "
                       "p=\"%.3g\"/>\n",
                    e->ordinal, e->ordinal, e->p);
        else
            fprintf(f, "  <safeguard id=\"s%d\" label=\"Safeguard %d misses it\" "
                       "p=\"%.3g\"/>\n",
                    e->ordinal, e->ordinal, e->p);
    }

    /* group paths into sub-systems and sub-systems into blocks */
    size_t n_paths = path_start.n, p = 0;
    int n_blocks = 0, n_subs = 0;
    while (p < n_paths) {
        n_blocks++;
        fprintf(f, "  <block id=\"b%d\" label=\"Area %d: any of its sub-systems fails\">\n",
                n_blocks, n_blocks);
        fprintf(f, "    <any>\n");
        int subs = rng_range(SUBS_PER_BLOCK_MIN, SUBS_PER_BLOCK_MAX);
        for (int s = 0; s < subs && p < n_paths; s++) {
            n_subs++;
            fprintf(f, "      <any id=\"u%d\" label=\"Sub-system %d\">\n", n_subs, n_subs);
            int paths = rng_range(PATHS_PER_SUB_MIN, PATHS_PER_SUB_MAX);
            for (int q = 0; q < paths && p < n_paths; q++, p++) {
                int c = path_start.v[p];
                fprintf(f, "        <all label=\"Path %zu passes every layer\">", p + 1);
                fprintf(f, "<ref to=\"");
                put_id(f, code.v[c]);
                fprintf(f, "\"/>");
                c++;
                while (code.v[c] != -2) {
                    if (code.v[c] == -1) {
                        int k = code.v[c + 1], n = code.v[c + 2];
                        fprintf(f, "<vote k=\"%d\">", k);
                        for (int j = 0; j < n; j++) {
                            fprintf(f, "<ref to=\"");
                            put_id(f, code.v[c + 3 + j]);
                            fprintf(f, "\"/>");
                        }
                        fprintf(f, "</vote>");
                        c += 3 + n;
                    } else {
                        fprintf(f, "<ref to=\"");
                        put_id(f, code.v[c]);
                        fprintf(f, "\"/>");
                        c++;
                    }
                }
                fprintf(f, "</all>\n");
            }
            fprintf(f, "      </any>\n");
        }
        fprintf(f, "    </any>\n");
        fprintf(f, "  </block>\n");
    }

    fprintf(f, "  <hazard id=\"hazard\" label=\"An error passes every safeguard of its "
               "path\">\n");
    fprintf(f, "    <any>\n");
    for (int b = 1; b <= n_blocks; b++)
        fprintf(f, "      <ref to=\"b%d\"/>\n", b);
    fprintf(f, "    </any>\n");
    fprintf(f, "  </hazard>\n");
    fprintf(f, "</safety-model>\n");
}

/* ---- main -------------------------------------------------------------------- */
static void usage(FILE *f)
{
    fprintf(f, "usage: lw-gen --events N --seed S [-o FILE]\n"
               "  N: number of error + safeguard events (>= 1)\n"
               "  S: unsigned 64-bit seed; same N and S give identical output\n"
               "  -o FILE: write there instead of standard output\n");
}

static int parse_u64(const char *s, uint64_t *out)
{
    char *end;
    if (!s || !*s || *s == '-')
        return -1;
    errno = 0;
    unsigned long long v = strtoull(s, &end, 10);
    if (errno || *end)
        return -1;
    *out = (uint64_t)v;
    return 0;
}

int main(int argc, char **argv)
{
    uint64_t n = 0, seed = 0;
    int have_n = 0, have_seed = 0;
    const char *out = NULL;
    for (int i = 1; i < argc; i++) {
        const char *a = argv[i];
        if (!strcmp(a, "-h") || !strcmp(a, "--help")) {
            usage(stdout);
            return 0;
        } else if (!strcmp(a, "--events") && i + 1 < argc) {
            if (parse_u64(argv[++i], &n) || n < 1 || n > 50000000) {
                fprintf(stderr, "lw-gen: --events must be an integer in 1..50000000\n");
                return 2;
            }
            have_n = 1;
        } else if (!strcmp(a, "--seed") && i + 1 < argc) {
            if (parse_u64(argv[++i], &seed)) {
                fprintf(stderr, "lw-gen: --seed must be an unsigned integer\n");
                return 2;
            }
            have_seed = 1;
        } else if ((!strcmp(a, "-o") || !strcmp(a, "--output")) && i + 1 < argc) {
            out = argv[++i];
        } else {
            fprintf(stderr, "lw-gen: unexpected argument '%s'\n", a);
            usage(stderr);
            return 2;
        }
    }
    if (!have_n || !have_seed) {
        usage(stderr);
        return 2;
    }

    rng_seed(seed);
    generate((long)n);

    FILE *f = stdout;
    if (out) {
        f = fopen(out, "w");
        if (!f) {
            fprintf(stderr, "lw-gen: cannot write %s: %s\n", out, strerror(errno));
            return 1;
        }
    }
    emit(f, (long)n, seed);
    if (fflush(f) != 0 || ferror(f) || (out && fclose(f) != 0)) {
        fprintf(stderr, "lw-gen: write error on %s\n", out ? out : "standard output");
        return 1;
    }
    free(events);
    free(code.v);
    free(path_start.v);
    free(path_sg.v);
    free(path_sg_off.v);
    return 0;
}
