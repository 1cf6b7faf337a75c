#!/usr/bin/env python3
"""exact.py - an independent exact evaluator for layerwise models.

It shares no code and no algorithm with layerwise's engine: the model is
read with xml.etree, expanded as docs/model-format.md describes ("How
dependence is quantified"), and the hazard probability is computed by
recursive conditioning (Shannon expansion, P(f) = p P(f|x=1) +
(1-p) P(f|x=0)) on plain Python formulas, memoised on the simplified
sub-formula, with independent factors multiplied out.  It is slow in
general and fine for the teaching models in trees/.

The expansions, as model-format.md states them:
  * an absent safeguard misses with certainty (p = 1);
  * a condition is a constant;
  * common cause (beta-factor): q = beta * min(p of members), a shared
    variable C with P(C) = q, member i = (I_i OR C) with
    P(I_i) = (p_i - q) / (1 - q);
  * THERP dependence of `second` B on `first` A (weight w by level):
    B = (I_B OR (A AND D)), P(I_B) = p (1 - w), P(D) = (c - i) / (1 - i),
    c = p + w (1 - p), where A is the first event as modelled.
An absent safeguard is a certain miss even when it is a dependence second
(the layer is not there, so nothing about the first check can make it
catch anything).

usage:
  exact.py MODEL.xml [--variant ID] [--hazard ID]   print P(hazard)
  exact.py --record ROOT MODEL:VARIANT ...           print lines for
      tests/golden/demo-probabilities.txt (VARIANT '-' = baseline)
  exact.py --selftest                               check exact.py itself
      against published values (methods.md) and closed forms
"""
import hashlib
import sys
import xml.etree.ElementTree as ET

WEIGHT = {"zero": 0.0, "low": 1.0 / 20.0, "moderate": 1.0 / 7.0,
          "high": 0.5, "complete": 1.0}
EVENTS = ("error", "safeguard", "condition")
GATES = ("all", "any", "vote")

TRUE = ("T",)
FALSE = ("F",)


class Model:
    def __init__(self, path):
        self.root = ET.parse(path).getroot()
        if self.root.tag != "safety-model":
            raise SystemExit("exact.py: not a safety-model: " + path)
        self.byid = {}
        self.events = {}        # id -> element
        self.hazards = []
        self.groups = []
        self.deps = []
        self.variants = {}
        self._index(self.root)

    def _index(self, elem):
        for c in elem:
            if not isinstance(c.tag, str):
                continue        # comments
            ident = c.get("id")
            if ident is not None:
                self.byid[ident] = c
            if c.tag in EVENTS:
                self.events[ident] = c
            if elem is self.root:
                if c.tag == "hazard":
                    self.hazards.append(c)
                elif c.tag == "common-cause":
                    self.groups.append(c)
                elif c.tag == "dependence":
                    self.deps.append(c)
                elif c.tag == "variant":
                    self.variants[ident] = c
            if c.tag not in ("variant",):
                self._index(c)


def event_p(e):
    """Point probability of an error or safeguard as written."""
    p = e.get("p")
    for c in e:
        if not isinstance(c.tag, str):
            continue
        if c.tag == "observed":     # Jeffreys posterior mean
            k, n = float(c.get("count")), float(c.get("of"))
            return (k + 0.5) / (n + 1.0)
        if c.tag == "beta":         # beta mean
            a, b = float(c.get("a")), float(c.get("b"))
            return a / (a + b)
    return float(p)


def parameters(model, variant):
    p, present, state = {}, {}, {}
    beta, level = {}, {}
    for ident, e in model.events.items():
        if e.tag == "condition":
            state[ident] = e.get("state") == "true"
        else:
            p[ident] = event_p(e)
            present[ident] = e.get("present", "yes") == "yes"
    for g in model.groups:
        beta[g.get("id")] = float(g.get("beta"))
    for i, d in enumerate(model.deps):
        level[i] = d.get("level")
    dep_index = {d.get("id"): i for i, d in enumerate(model.deps)
                 if d.get("id") is not None}
    if variant is not None:
        if variant not in model.variants:
            raise SystemExit("exact.py: no variant " + variant)
        for s in model.variants[variant]:
            if not isinstance(s.tag, str) or s.tag != "set":
                continue
            ref = s.get("ref")
            if s.get("p") is not None:
                p[ref] = float(s.get("p"))
            elif s.get("present") is not None:
                present[ref] = s.get("present") == "yes"
            elif s.get("state") is not None:
                state[ref] = s.get("state") == "true"
            elif s.get("beta") is not None:
                beta[ref] = float(s.get("beta"))
            elif s.get("level") is not None:
                level[dep_index[ref]] = s.get("level")
    absent = set(i for i in p if not present.get(i, True))
    for ident in absent:
        p[ident] = 1.0
    return p, state, beta, level, absent


class Expansion:
    """Variables and their probabilities; the formula of every event."""

    def __init__(self, model, variant):
        self.model = model
        (self.p, self.state, self.beta, self.level,
         self.absent) = parameters(model, variant)
        self.prob = {}          # variable name -> probability
        self.member_of = {}
        for g in model.groups:
            for mid in g.get("members").split():
                self.member_of[mid] = g
        self.second_of = {}
        for i, d in enumerate(model.deps):
            self.second_of[d.get("second")] = (i, d)
        self.memo = {}

    def event(self, ident):
        """The formula of an error or safeguard as modelled."""
        if ident in self.memo:
            return self.memo[ident]
        e = self.model.events[ident]
        if e.tag == "condition":
            f = TRUE if self.state[ident] else FALSE
        else:
            p = self.p[ident]
            if ident in self.member_of:
                g = self.member_of[ident]
                gid = g.get("id")
                q = self.beta[gid] * min(self.p[m]
                                         for m in g.get("members").split())
                self.prob["common:" + gid] = q
                self.prob[ident] = 0.0 if q >= 1.0 else max(
                    0.0, (p - q) / (1.0 - q))
                f = ("or", (("v", ident), ("v", "common:" + gid)))
            elif (ident in self.second_of and ident not in self.absent
                  and p < 1.0):
                i_dep, d = self.second_of[ident]
                w = WEIGHT[self.level[i_dep]]
                i = p * (1.0 - w)
                c = p + w * (1.0 - p)
                name = "depends:" + (d.get("id") or
                                     d.get("first") + ">" + ident)
                self.prob[ident] = i
                self.prob[name] = 0.0 if i >= 1.0 else (c - i) / (1.0 - i)
                first = self.event(d.get("first"))
                f = ("or", (("v", ident), ("and", (first, ("v", name)))))
            else:
                # includes an absent (or p = 1) dependence second: a
                # certain miss
                self.prob[ident] = p
                f = ("v", ident)
        self.memo[ident] = f
        return f

    def logic(self, elem, stack=()):
        tag = elem.tag
        if tag == "ref":
            return self.logic(self.model.byid[elem.get("to")], stack)
        if tag in EVENTS:
            return self.event(elem.get("id"))
        key = id(elem)
        if key in self.memo:
            return self.memo[key]
        if key in stack:
            raise SystemExit("exact.py: cycle at " + str(elem.get("id")))
        kids = [self.logic(c, stack + (key,)) for c in elem
                if isinstance(c.tag, str)]
        if tag in ("hazard", "block"):
            f = kids[0]
        elif tag == "all":
            f = ("and", tuple(kids))
        elif tag == "any":
            f = ("or", tuple(kids))
        elif tag == "vote":
            f = ("vote", int(float(elem.get("k"))), tuple(kids))
        else:
            raise SystemExit("exact.py: unexpected <%s>" % tag)
        self.memo[key] = f
        return f


def simplify(f, var=None, val=None):
    """Restrict variable 'var' to 'val' (or nothing) and fold constants."""
    kind = f[0]
    if kind in ("T", "F"):
        return f
    if kind == "v":
        if f[1] == var:
            return TRUE if val else FALSE
        return f
    if kind == "vote":
        k, kids = f[1], f[2]
    else:
        k, kids = None, f[1]
    out = []
    ntrue = 0
    for c in kids:
        s = simplify(c, var, val)
        if s is TRUE or s == TRUE:
            if kind == "or":
                return TRUE
            ntrue += 1
            continue
        if s is FALSE or s == FALSE:
            if kind == "and":
                return FALSE
            continue
        out.append(s)
    if kind == "and":
        if not out:
            return TRUE
        return out[0] if len(out) == 1 else ("and", tuple(out))
    if kind == "or":
        if not out:
            return FALSE
        return out[0] if len(out) == 1 else ("or", tuple(out))
    k -= ntrue
    if k <= 0:
        return TRUE
    if k > len(out):
        return FALSE
    if k == len(out):
        return out[0] if len(out) == 1 else ("and", tuple(out))
    if k == 1:
        return ("or", tuple(out))
    return ("vote", k, tuple(out))


def support(f, acc):
    if f[0] == "v":
        acc.add(f[1])
    elif f[0] in ("and", "or"):
        for c in f[1]:
            support(c, acc)
    elif f[0] == "vote":
        for c in f[2]:
            support(c, acc)
    return acc


class Evaluator:
    def __init__(self, prob):
        self.prob = prob
        self.memo = {}

    def P(self, f):
        if f == TRUE:
            return 1.0
        if f == FALSE:
            return 0.0
        if f[0] == "v":
            return self.prob[f[1]]
        if f in self.memo:
            return self.memo[f]
        r = None
        if f[0] in ("and", "or"):
            # independent factors: children with disjoint supports
            kids = f[1]
            sups = [support(c, set()) for c in kids]
            seen = set()
            disjoint = True
            for s in sups:
                if seen & s:
                    disjoint = False
                    break
                seen |= s
            if disjoint:
                if f[0] == "and":
                    r = 1.0
                    for c in kids:
                        r *= self.P(c)
                else:
                    r = 1.0
                    for c in kids:
                        r *= 1.0 - self.P(c)
                    r = 1.0 - r
        if r is None:
            # Shannon expansion on the most frequent variable
            counts = {}
            self._count(f, counts)
            x = max(sorted(counts), key=lambda n: counts[n])
            px = self.prob[x]
            r = (px * self.P(simplify(f, x, True)) +
                 (1.0 - px) * self.P(simplify(f, x, False)))
        self.memo[f] = r
        return r

    def _count(self, f, counts):
        if f[0] == "v":
            counts[f[1]] = counts.get(f[1], 0) + 1
        elif f[0] in ("and", "or"):
            for c in f[1]:
                self._count(c, counts)
        elif f[0] == "vote":
            for c in f[2]:
                self._count(c, counts)


def hazard_probability(path, variant=None, hazard=None):
    model = Model(path)
    hz = model.hazards
    if hazard is not None:
        hz = [h for h in hz if h.get("id") == hazard]
        if not hz:
            raise SystemExit("exact.py: no hazard " + hazard)
    elif len(hz) != 1:
        raise SystemExit("exact.py: several hazards; name one with --hazard")
    ex = Expansion(model, variant)
    f = simplify(ex.logic(hz[0]))
    return Evaluator(ex.prob).P(f)


SELFTEST = [
    # (events and logic, expected P, source)
    ('<error id="a" p="0.1"/><error id="b" p="0.1"/><error id="c" p="0.1"/>'
     '<hazard id="h"><vote k="2"><ref to="a"/><ref to="b"/><ref to="c"/>'
     '</vote></hazard>', 0.028, "methods.md 2.4 [D], 2-of-3 at q = 0.1"),
    ('<error id="a" p="0.1"/><error id="b" p="0.2"/><error id="c" p="0.3"/>'
     '<hazard id="h"><all><ref to="a"/><any><ref to="b"/><ref to="c"/>'
     '</any></all></hazard>', 0.044, "methods.md 2.3 [D], A(B+C)"),
    ('<error id="a" p="0.1"/><error id="b" p="0.2"/><error id="c" p="0.3"/>'
     '<hazard id="h"><all><any><ref to="a"/><any><ref to="b"/>'
     '<ref to="c"/></any></any><any><ref to="c"/><all><ref to="a"/>'
     '<ref to="b"/></all></any></all></hazard>', 0.314,
     "methods.md 1.5 [D], NUREG-0492 ch. VII example"),
    ('<safeguard id="a" p="0.01"/><safeguard id="b" p="0.01"/>'
     '<hazard id="h"><all><ref to="a"/><ref to="b"/></all></hazard>'
     '<dependence id="d" first="a" second="b" level="high"/>', 5.05e-3,
     "methods.md 3.3 [D], NUREG/CR-1278 HD joint at BHEP 0.01"),
    ('<safeguard id="a" p="0.01"/><safeguard id="b" p="0.01"/>'
     '<safeguard id="c" p="0.01"/><hazard id="h"><all><ref to="a"/>'
     '<ref to="b"/><ref to="c"/></all></hazard>'
     '<dependence id="d1" first="a" second="b" level="high"/>'
     '<dependence id="d2" first="b" second="c" level="high"/>', 2.55025e-3,
     "methods.md 3.3 [D], chain of three at HD"),
    ('<safeguard id="a" p="0.01"/><safeguard id="b" p="0.01"/>'
     '<hazard id="h"><ref to="b"/></hazard>'
     '<dependence id="d" first="a" second="b" level="moderate"/>', 0.01,
     "methods.md 3.4 [D] fact 1, the THERP pair keeps the marginal"),
    ('<safeguard id="a"><observed count="9" of="400"/></safeguard>'
     '<hazard id="h"><ref to="a"/></hazard>', 2.36908e-2,
     "methods.md 6.3 [D], Jeffreys mean of 9/400"),
    ('<safeguard id="a" p="0.01"/><safeguard id="b" p="0.01"/>'
     '<safeguard id="c" p="0.01"/><hazard id="h"><all><ref to="a"/>'
     '<ref to="b"/><ref to="c"/></all></hazard>'
     '<common-cause id="g" beta="0.1" members="a b c"/>',
     1.0 - (1.0 - 0.001) * (1.0 - (0.009 / 0.999) ** 3),
     "closed form 1-(1-q)(1-r^3), q = beta p, r = (p-q)/(1-q); "
     "methods.md 4.2 expansion"),
]


def selftest():
    import os
    import tempfile
    bad = 0
    for body, want, source in SELFTEST:
        xml = ('<?xml version="1.0"?>\n<safety-model format="1" id="t">'
               + body + '</safety-model>\n')
        fd, path = tempfile.mkstemp(suffix=".xml")
        try:
            with os.fdopen(fd, "w") as fh:
                fh.write(xml)
            got = hazard_probability(path)
        finally:
            os.unlink(path)
        tol = 1e-5 if source.startswith("methods.md 6.3") else 1e-9
        if abs(got - want) > tol * max(abs(want), 1e-300):
            print("exact.py selftest FAILED: %s: got %.12g, want %.12g"
                  % (source, got, want))
            bad += 1
    if not bad:
        print("exact.py selftest: %d checks passed" % len(SELFTEST))
    return 1 if bad else 0


def main(argv):
    if len(argv) >= 2 and argv[1] == "--selftest":
        return selftest()
    if len(argv) >= 2 and argv[1] == "--record":
        root = argv[2]
        print("# Exact hazard probabilities of the demo models, computed by")
        print("# tests/golden/exact.py (independent of layerwise's engine).")
        print("# golden_demo.sh compares `layerwise analyze` with exact.py at")
        print("# test time; these recorded values also catch a silent change")
        print("# while the model file is unchanged (same sha256).")
        print("# Re-record: python3 tests/golden/exact.py --record . "
              "trees/X.xml:VARIANT ...")
        print("# model variant probability sha256")
        for case in argv[3:]:
            rel, var = case.rsplit(":", 1)
            path = root + "/" + rel
            with open(path, "rb") as fh:
                digest = hashlib.sha256(fh.read()).hexdigest()
            p = hazard_probability(path, None if var == "-" else var)
            print("%s %s %.17g %s" % (rel, var, p, digest))
        return 0
    args = argv[1:]
    variant = hazard = None
    path = None
    while args:
        a = args.pop(0)
        if a == "--variant":
            variant = args.pop(0)
        elif a == "--hazard":
            hazard = args.pop(0)
        else:
            path = a
    if path is None:
        print(__doc__, file=sys.stderr)
        return 2
    print("%.17g" % hazard_probability(path, variant, hazard))
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
