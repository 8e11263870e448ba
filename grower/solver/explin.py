"""Exact analysis inside a step of ``g(s) = a + b s + sum_i c_i exp(lam_i s)``.

Its inflection points are the zeros of ``sum_i c_i lam_i^2 exp(lam_i s)`` (closed form
for two terms; for more, Rolle's theorem on ``exp(-lam_1 s) g''`` gives a recursion);
between them ``g`` is convex or concave, so extrema and threshold crossings are bracketed
and found by a safeguarded Newton iteration on the exact solution.

References
----------
W. H. Press et al. (2007), *Numerical Recipes*, 3rd ed., Cambridge University Press,
sec. 9.4 (Newton-Raphson safeguarded by bisection).
"""

from __future__ import annotations

import numpy as np


class ExpLin:
    """A batch of ``g(s) = g0 + e1 s + sum_i [em z_i + em/lam b_i + (em - lam s)/lam^2 c_i]``,
    ``em = expm1(lam_i s)``, on ``0 <= s <= w``: the exact solution of one mode set from
    weighted modal state z, forcing b and forcing slope c. Written as an increment on g0 so
    that g near a switching point is not lost in round-off."""

    def __init__(self, lam, z, b, c, g0, e1, w):  # type: ignore[no-untyped-def]
        self.lam, self.z, self.b, self.c = lam, z, b, c
        self.g0, self.e1, self.w = g0, e1, w
        self.k1 = lam * z + b  # g' coefficients at s = 0
        self.k2 = lam * self.k1 + c  # g'' = sum k2 exp(lam s)

    def take(self, i: np.ndarray) -> ExpLin:
        return ExpLin(self.lam, self.z[i], self.b[i], self.c[i], self.g0[i], self.e1[i], self.w[i])

    @staticmethod
    def join(parts: list[ExpLin]) -> ExpLin:
        """One batch of the items of batches with the same modes."""
        if len(parts) == 1:
            return parts[0]

        def cat(name: str):  # type: ignore[no-untyped-def]
            return np.concatenate([getattr(p, name) for p in parts])

        return ExpLin(parts[0].lam, *(cat(n) for n in ("z", "b", "c", "g0", "e1", "w")))

    def _sums(self, s: np.ndarray, v: bool, d1: bool, d2: bool) -> list[np.ndarray]:
        """The mode sums of g, g' and g'' at offsets s (K,) or (K, P) that are asked for
        (without g0 + e1 s, e1), one mode at a time on arrays shaped like s: numpy on (K,
        P, r) with r = 2 or 3 innermost runs at a fraction of its speed. Summed in mode
        order, as a reduction over the modes would."""
        sh = (slice(None),) + (None,) * (s.ndim - 1)
        zero = np.zeros(s.shape)  # the sums over no modes (a held air node)
        out = [zero, zero, zero]
        for i, lam in enumerate(self.lam.tolist()):
            x = s * lam
            em = np.expm1(x)
            ep = em + 1.0
            ci = self.c[:, i][sh]
            terms = (
                em * self.z[:, i][sh] + em / lam * self.b[:, i][sh] + (em - x) / (lam * lam) * ci
                if v
                else None,
                ep * self.k1[:, i][sh] + em / lam * ci if d1 else None,
                ep * self.k2[:, i][sh] if d2 else None,
            )
            out = [
                o if t is None else t if i == 0 else o + t for o, t in zip(out, terms, strict=True)
            ]
        return out

    def val(self, s: np.ndarray) -> np.ndarray:
        sh = (slice(None),) + (None,) * (s.ndim - 1)
        return self.g0[sh] + self.e1[sh] * s + self._sums(s, True, False, False)[0]

    def d1(self, s: np.ndarray) -> np.ndarray:
        sh = (slice(None),) + (None,) * (s.ndim - 1)
        return self.e1[sh] + self._sums(s, False, True, False)[1]

    def d2(self, s: np.ndarray) -> np.ndarray:
        return self._sums(s, False, False, True)[2]

    def val_d1(self, s: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """``(val(s), d1(s))`` with one exponential: the same numbers."""
        sh = (slice(None),) + (None,) * (s.ndim - 1)
        t, d, _ = self._sums(s, True, True, False)
        return self.g0[sh] + self.e1[sh] * s + t, self.e1[sh] + d

    def d1_d2(self, s: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """``(d1(s), d2(s))`` with one exponential: the same numbers."""
        sh = (slice(None),) + (None,) * (s.ndim - 1)
        _, d, d2 = self._sums(s, False, True, True)
        return self.e1[sh] + d, d2


#: plain Newton steps before the safeguards, for callers that ask for them (`safe_newton`):
#: on the monotone, convex or concave brackets they give, three to six reach the tolerance
NEWTON_STEPS = 6


def safe_newton(
    fd, a: np.ndarray, b: np.ndarray, fa: np.ndarray, x0=None, newton: int = 0
) -> np.ndarray:  # type: ignore[no-untyped-def]
    """Root in [a, b] of f (fd(s) -> (f, f')), f(a) and f(b) of opposite sign, from ``x0``
    inside the bracket (default its middle): Newton steps kept inside a shrinking bracket,
    else bisection (Numerical Recipes sec. 9.4).

    ``newton`` > 0: first up to that many plain Newton steps on all items, each kept
    inside [a, b]; an item is done when its step falls to the tolerance (a step cut at
    an end of the bracket does not count), and only the items still moving go on to the
    bracketed loop (from their start again if a plain step left them at an end), which
    costs about twice the array operations a step. The roots are
    the same to round-off, not to the bit: the analysis of a free float's runs
    (`analysis`) asks for it, the step-by-step analysis, whose reports are pinned to the
    bit, does not.

    Two cases where Newton would crawl are cut short: f(a) at round-off against f inside
    (a double root at a: Newton only halves the distance) is the root a itself; in the
    bracketed loop, a step past an end of the bracket goes to that end first (a root next
    to it, which Newton from inside overshoots), and bisects only if the step before went
    to an end too.
    """
    lo, hi = a.copy(), b.copy()
    pos = fa > 0
    low, high = np.minimum(lo, hi), np.maximum(lo, hi)
    x = 0.5 * (lo + hi) if x0 is None else np.clip(x0, low, high)
    tol = 1e-13 * (b - a) + 1e-300
    f, df = fd(x)
    flat = np.abs(fa) <= 1e-13 * np.abs(f)
    if flat.any():
        x = np.where(flat, a, x)
        f, df = fd(x)
        f = np.where(flat, 0.0, f)
    done = f == 0
    start = x, f, df
    for _ in range(newton):
        with np.errstate(divide="ignore", invalid="ignore"):
            step = f / df
        xn = np.minimum(np.maximum(x - step, low), high)
        x = np.where(done | np.isnan(xn), x, xn)
        done |= np.abs(step) <= tol
        if done.all():
            return x
        f, df = fd(x)
        if flat.any():
            f = np.where(flat, 0.0, f)
        done |= f == 0
    if newton:
        # an item still moving that a plain step left at an end of the bracket starts over
        # from where it began: the loop below would read it as converged there
        keep = done | ((x > low) & (x < high))
        x, f, df = (np.where(keep, now, then) for now, then in zip((x, f, df), start, strict=True))
    ended = np.zeros(np.shape(x), dtype=bool)
    was = done.copy()
    for _ in range(200):
        if done.all():
            break
        if flat.any():
            f = np.where(flat, 0.0, f)
        same = (f > 0) == pos
        lo = np.where(same, x, lo)
        hi = np.where(same, hi, x)
        with np.errstate(divide="ignore", invalid="ignore"):
            xn = x - f / df
        low, high = np.minimum(lo, hi), np.maximum(lo, hi)
        # a step below round-off (xn == x, x at the bracket's end) is convergence, not a
        # reason to bisect down to the tolerance
        out = (~np.isfinite(xn) | (xn <= low) | (xn >= high)) & (xn != x)
        past = np.where(xn <= low, low, high)
        xn = np.where(out, np.where(ended | ~np.isfinite(xn), 0.5 * (lo + hi), past), xn)
        ended = out & ~ended
        done |= (f == 0) | (np.abs(xn - x) <= tol) | (np.abs(hi - lo) <= tol)
        x = np.where((f == 0) | was, x, xn)
        was = done.copy()  # converged items stay put: a batch's company changes nothing
        if done.all():
            break
        f, df = fd(x)
    return x


def roots_of_sum(coef: np.ndarray, mu: np.ndarray, w: np.ndarray) -> np.ndarray:
    """Zeros in (0, w) of ``sum_i coef_i exp(mu_i s)``: (K, r-1), sorted, NaN-padded."""
    kk, r = coef.shape
    if r < 2:
        return np.zeros((kk, 0))
    j = int(np.argmax(mu))
    nu = mu - mu[j]
    if r == 2:
        o = 1 - j
        with np.errstate(divide="ignore", invalid="ignore"):
            s = np.log(-coef[:, j] / coef[:, o]) / nu[o]
        ok = np.isfinite(s) & (s > 0) & (s < w)
        return np.where(ok, s, np.nan)[:, None]
    oth = np.array([i for i in range(r) if i != j])
    dco = coef[:, oth] * nu[oth]
    sub = roots_of_sum(dco, nu[oth], w)
    br = np.sort(
        np.concatenate(
            [np.zeros((kk, 1)), np.where(np.isnan(sub), w[:, None], sub), w[:, None]], 1
        ),
        1,
    )

    def f_of(s, rows):  # type: ignore[no-untyped-def]
        e = np.exp(s[..., None] * nu[oth])
        return coef[rows, j] + (coef[rows][:, oth] * e).sum(-1), (dco[rows] * e).sum(-1)

    fb = coef[:, j][:, None] + (coef[:, None, oth] * np.exp(br[..., None] * nu[oth])).sum(-1)
    out = np.full((kk, r - 1), np.nan)
    for p in range(r - 1):
        sel = np.flatnonzero((fb[:, p] * fb[:, p + 1] < 0) & (br[:, p + 1] > br[:, p]))
        if sel.size:
            out[sel, p] = safe_newton(
                lambda s, sel=sel: f_of(s, sel), br[sel, p], br[sel, p + 1], fb[sel, p]
            )
    return np.sort(out, axis=1)


def _convex_breaks(el: ExpLin) -> np.ndarray:
    """0, the inflection points, w: (K, P); g is convex or concave between them."""
    infl = roots_of_sum(el.k2, el.lam, el.w)
    w = el.w[:, None]
    return np.sort(np.concatenate([np.zeros_like(w), np.where(np.isnan(infl), w, infl), w], 1), 1)


def step_profile(
    el: ExpLin, newton: int = 0
) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Exact first zero (g <= 0), minimum, its place and the length with g < 0, per item.

    ``newton`` > 0: the root searches start from the roots of the chords and take that
    many plain Newton steps first (`safe_newton`): quicker, the same to round-off."""
    kk = el.w.size
    br = _convex_breaks(el)
    d = el.d1(br)
    ext = np.full((kk, br.shape[1] - 1), np.nan)
    for p in range(br.shape[1] - 1):
        sel = np.flatnonzero((d[:, p] * d[:, p + 1] < 0) & (br[:, p + 1] > br[:, p]))
        if sel.size:
            sub = el.take(sel)
            a, b, da, db = br[sel, p], br[sel, p + 1], d[sel, p], d[sel, p + 1]
            # from the root of the slope's chord: the slope is monotone in the bracket
            x0 = a + (b - a) * (da / (da - db)) if newton else None
            ext[sel, p] = safe_newton(sub.d1_d2, a, b, da, x0, newton)
    mono = np.sort(np.concatenate([br, np.where(np.isnan(ext), el.w[:, None], ext)], 1), 1)
    gv = el.val(mono)
    gv[:, 0] = el.g0
    k = np.argmin(gv, axis=1)
    ar = np.arange(kk)
    gmin, smin = gv[ar, k], mono[ar, k]
    a, b = mono[:, :-1], mono[:, 1:]
    ga, gb = gv[:, :-1], gv[:, 1:]
    cross = (ga * gb < 0) & (b > a)
    roots = np.full(a.shape, np.nan)
    ii, pp = np.nonzero(cross)
    if ii.size:
        sub = el.take(ii)
        lo, hi, fl, fh = a[ii, pp], b[ii, pp], ga[ii, pp], gb[ii, pp]
        # from the root of the chord: g is monotone in the bracket
        x0 = lo + (hi - lo) * (fl / (fl - fh)) if newton else None
        roots[ii, pp] = safe_newton(sub.val_d1, lo, hi, fl, x0, newton)
    full_below = (ga <= 0) & (gb <= 0) & ~((ga == 0) & (gb == 0))
    part = np.where(ga < 0, roots - a, b - roots)
    below = np.where(full_below, b - a, np.where(cross, part, 0.0)).sum(axis=1)
    first = np.full(kk, np.nan)
    first[gv[:, 0] <= 0] = 0.0
    hitp = (gb <= 0) & (b > a)
    for p in range(a.shape[1] - 1, -1, -1):  # keep the earliest
        h = hitp[:, p] & (gv[:, 0] > 0)
        first[h] = np.where(gb[h, p] == 0, b[h, p], roots[h, p])
    return first, gmin, smin, below
