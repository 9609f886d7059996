# An independent reader of planmill's HDF5 plan records for the reference tests, written from
# docs/format.md alone ("Record kinds", "Graph records"), with h5py and numpy (Debian
# python3-h5py, python3-numpy). Imported by the Python checks of tests/store and tests/export.
import sys

import numpy as np


def varint(b, i):
    v = shift = 0
    while True:
        v |= (int(b[i]) & 0x7F) << shift
        i += 1
        if not b[i - 1] & 0x80:
            return v, i
        shift += 7


class RangeDecoder:
    def __init__(self, b):
        self.b, self.at = b, 5
        self.range, self.code = 0xFFFFFFFF, int.from_bytes(bytes(b[:5]), "big")

    def normalize(self):
        while self.range < 1 << 24:
            self.range = (self.range << 8) & 0xFFFFFFFF
            self.code = ((self.code << 8) | int(self.b[self.at])) & 0xFFFFFFFF
            self.at += 1

    def bit(self, p, i):
        bound = (self.range >> 11) * p[i]
        if self.code < bound:
            self.range, p[i], bit = bound, p[i] + ((2048 - p[i]) >> 5), 0
        else:
            self.code, self.range, p[i], bit = (self.code - bound, self.range - bound,
                                                p[i] - (p[i] >> 5), 1)
        self.normalize()
        return bit

    def direct(self):
        self.range >>= 1
        bit = int(self.code >= self.range)
        if bit:
            self.code -= self.range
        self.normalize()
        return bit


def graph_plan(b, lower, k):
    """A graph record (kind 4): lower[u] lists the neighbours v < u of unit u."""
    rc, p, plan, latest, prev = RangeDecoder(b), [1024] * 86, [0] * len(lower), {}, -1
    for u in range(len(lower)):
        count = {}
        for v in lower[u]:
            count[plan[v]] = count.get(plan[v], 0) + 1
        cands = sorted(count, key=lambda d: (-count[d], d))
        label = None
        for i, d in enumerate(cands):
            ctx = (((min(len(cands), 3) - 1) * 3 + min(i, 2)) * 3 + min(count[d], 3) - 1) * 2
            if rc.bit(p, ctx + (d == prev)):
                label = d
                break
        if label is None:
            g, length, m = 54 + (16 if cands else 0), 1, 1
            while rc.bit(p, g + length - 1):
                length += 1
            for _ in range(length - 1):
                m = 2 * m + rc.direct()
            rest = sorted((d for d in range(k) if d not in count),
                          key=lambda d: (-latest.get(d, -1), d))
            label = rest[m - 1]
        plan[u], latest[label], prev = label, u, label
    assert rc.at == len(b), "graph record not read to its end"
    return np.array(plan, dtype=np.int64)


def records(f, group):
    """Yields (step, kind, plan) for every record of group `group` (e.g. "chain_0") of file f."""
    k = int(f.attrs["district_count"])
    w = 1 if k <= 255 else 2
    lower = None  # per unit: its neighbours v < u, from /unit_adjacency
    if "unit_adjacency" in f:
        off, nb = f["unit_adjacency/offsets"][...], f["unit_adjacency/neighbors"][...]
        lower = [[int(v) for v in nb[off[u]:off[u + 1]] if v < u] for u in range(len(off) - 1)]
    g = f[group]
    data, plan = g["plan_bytes"][...], None
    label = lambda b, i: int.from_bytes(bytes(b[i:i + w]), "little")
    for step, offset, length, kind in g["plan_records"][...]:
        b = data[offset:offset + length]
        if kind == 0:
            plan = (b.view("<u2") if w == 2 else b).astype(np.int64)
        elif kind == 1:
            pass  # the plan is unchanged
        elif kind == 2:
            a, c = label(b, 0), label(b, w)
            members = np.flatnonzero((plan == a) | (plan == c))
            bits = np.unpackbits(b[2 * w:], bitorder="little")[:len(members)]
            plan[members] = np.where(bits == 1, c, a)
        elif kind == 3:
            i = u = 0
            guess = {}
            while i < len(b):
                gap, i = varint(b, i)
                coded, i = varint(b, i)
                u += gap
                old = int(plan[u])
                if coded % 2:
                    guess[old] = label(b, i)
                    i += w
                plan[u:u + coded // 2] = guess[old]
                u += coded // 2
        elif kind == 4:
            plan = graph_plan(b, lower, k)
        else:
            sys.exit("record kind %d is not decoded by this reader" % kind)
        yield int(step), int(kind), plan.copy()
