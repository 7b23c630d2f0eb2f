"""Binary symmetric channel maths: what a code buys when every bit flips independently with probability f.

Pure Python + numpy, no C.  Everything that can be tiny is computed in the log domain or with
log1p/expm1, so a block failure of 1e-40 comes out as 1e-40 and not as 0 or as rounding noise:

- `h2`, `capacity`: binary entropy and the BSC capacity C = 1 - H2(f), in bits per channel bit.
- `log_tail`/`tail`: P(X > t) for X ~ Binomial(n, p), summed term by term in the log domain.
- `symbol_error(f, m)`: 1 - (1 - f)^m without cancellation, for Reed-Solomon symbols of m bits.
- `bounded_distance_failure`: P(more than t of n units in error) for decoders that correct up to t.
- `secded_split`: an extended Hamming decoder's failures split into detected and undetected ones.
- `crc_repetition`: per-bit vote error, frame failure with the per-copy fallback counted exactly,
  and an *estimate* of the CRC's undetected errors.
- `post_decoding_ber`: bit error rate left after decoding.
- `normal_approx_rate`: the finite-length normal approximation of Polyanskiy, Poor and Verdu, "Channel
  coding rate in the finite blocklength regime", IEEE Trans. Inf. Theory 56(5), 2010, for the BSC.

The model is the memoryless BSC only: independent bit flips of one fixed probability.  Bursts, retention
loss that grows with time, and stuck bits are not modelled.
"""
from __future__ import annotations

import math
from statistics import NormalDist

import numpy as np

from .base import Channel

LN2 = math.log(2.0)
_WINDOW_SIGMAS = 40         # terms beyond the mode + 40 standard deviations weigh < e^-800 of the peak
_WINDOW_EXTRA = 60          # plus a fixed margin for the Poisson-like regime (small n*p)


# -- entropy and capacity -------------------------------------------------------------------------------

def h2(f: float) -> float:
    """Binary entropy in bits: -f log2 f - (1 - f) log2 (1 - f); 0 at f = 0 and f = 1."""
    if not 0.0 <= f <= 1.0:
        raise ValueError(f"probability must be in [0, 1] (got {f})")
    if f == 0.0 or f == 1.0:
        return 0.0
    return -(f * math.log(f) + (1.0 - f) * math.log1p(-f)) / LN2


def capacity(f: float) -> float:
    """Capacity of the binary symmetric channel with flip probability f, bits per channel bit."""
    return 1.0 - h2(f)


# -- binomial tails in the log domain --------------------------------------------------------------------

def _log_terms(n: int, lo: int, hi: int, p: float) -> np.ndarray:
    """log P(X = i) for i = lo..hi, X ~ Binomial(n, p); 0 < p < 1, 0 <= lo <= hi <= n."""
    i = np.arange(lo, hi + 1, dtype=np.float64)
    log_c0 = math.lgamma(n + 1) - math.lgamma(lo + 1) - math.lgamma(n - lo + 1)
    # log C(n, i+1) - log C(n, i) = log(n - i) - log(i + 1)
    steps = np.log(n - i[:-1]) - np.log(i[:-1] + 1.0)
    log_c = log_c0 + np.concatenate(([0.0], np.cumsum(steps)))
    return log_c + i * math.log(p) + (n - i) * math.log1p(-p)


def _logsumexp(terms: np.ndarray) -> float:
    top = float(terms.max())
    if top == -math.inf:
        return -math.inf
    return top + math.log(float(np.exp(terms - top).sum()))


def _window(n: int, p: float) -> tuple[int, int]:
    mode = min(n, int(math.floor((n + 1) * p)))
    reach = int(_WINDOW_SIGMAS * math.sqrt(n * p * (1.0 - p))) + _WINDOW_EXTRA
    return mode, reach


def log_pmf(n: int, i: int, p: float) -> float:
    """log P(X = i), X ~ Binomial(n, p)."""
    if not 0 <= i <= n:
        return -math.inf
    if p <= 0.0:
        return 0.0 if i == 0 else -math.inf
    if p >= 1.0:
        return 0.0 if i == n else -math.inf
    return float(_log_terms(n, i, i, p)[0])


def log_tail(n: int, t: int, p: float) -> float:
    """log P(X > t), X ~ Binomial(n, p): the chance that more than t of n units are in error."""
    _check_p(p)
    if t < 0 or p >= 1.0:
        return 0.0 if n > t else -math.inf
    if t >= n or p == 0.0:
        return -math.inf
    mode, reach = _window(n, p)
    lo = t + 1
    hi = min(n, max(lo, mode) + reach)
    return _logsumexp(_log_terms(n, lo, hi, p))


def log_cdf(n: int, t: int, p: float) -> float:
    """log P(X <= t), X ~ Binomial(n, p)."""
    _check_p(p)
    if t < 0:
        return -math.inf
    if t >= n or p == 0.0:
        return 0.0
    if p >= 1.0:
        return -math.inf
    mode, reach = _window(n, p)
    lo = max(0, min(t, mode) - reach)
    return _logsumexp(_log_terms(n, lo, t, p))


def tail(n: int, t: int, p: float) -> float:
    """P(X > t), X ~ Binomial(n, p)."""
    return min(1.0, math.exp(log_tail(n, t, p)))


def cdf(n: int, t: int, p: float) -> float:
    """P(X <= t), X ~ Binomial(n, p)."""
    return min(1.0, math.exp(log_cdf(n, t, p)))


def _check_p(p: float) -> None:
    if not 0.0 <= p <= 1.0:
        raise ValueError(f"probability must be in [0, 1] (got {p})")


def none_of(n: int, p: float) -> float:
    """(1 - p)^n, the chance that none of n independent units is hit."""
    return math.exp(n * math.log1p(-p)) if p < 1.0 else (1.0 if n == 0 else 0.0)


def any_of(n: int, p: float) -> float:
    """1 - (1 - p)^n without cancellation: -expm1(n log1p(-p))."""
    if p >= 1.0:
        return 1.0 if n > 0 else 0.0
    return -math.expm1(n * math.log1p(-p))


def symbol_error(f: float, m: int) -> float:
    """Chance that a symbol of m bits holds at least one flipped bit: 1 - (1 - f)^m, computed
    as -expm1(m log1p(-f)) so that f = 1e-12 gives 8e-12 and not rounding noise."""
    return any_of(m, f)


def repeat_failure(p_one: float, count: int) -> float:
    """Failure of `count` independent codewords when each fails with p_one: 1 - (1 - p_one)^count."""
    return any_of(count, p_one)


# -- bounded-distance decoders ------------------------------------------------------------------------

def bounded_distance_failure(n: int, t: int, p: float) -> float:
    """P(more than t of the n units in error): the exact block failure of a decoder that corrects every
    pattern of up to t unit errors and nothing more (BCH, Reed-Solomon, Hamming)."""
    return tail(n, t, p)


def post_decoding_ber(n: int, t: int, p: float) -> float:
    """Unit error rate after a bounded-distance decoder that leaves a block it cannot decode as received.

    Sum over i > t of (i / n) P(i errors): each failed block keeps its i errors.  By the identity
    i C(n, i) p^i (1-p)^(n-i) = n p C(n-1, i-1) p^(i-1) (1-p)^(n-i) this is p P(Binomial(n-1, p) >= t).
    A miscorrection adds up to t more wrong units, so where failures are mostly undetected the true
    figure lies between this and (1 + t/(t+1)) times it.
    """
    if n <= 0:
        return 0.0
    if t <= 0:
        return p
    return p * tail(n - 1, t - 1, p)


def _parity_sum(n: int, lo: int, parity: int, p: float) -> float:
    """P(X >= lo and X = parity mod 2), X ~ Binomial(n, p), in the log domain."""
    if lo > n or p == 0.0:
        return 0.0
    mode, reach = _window(n, p)
    hi = min(n, max(lo, mode) + reach)
    terms = _log_terms(n, lo, hi, p)
    idx = np.arange(lo, hi + 1)
    return math.exp(_logsumexp(terms[idx % 2 == parity]))


def secded_split(n: int, p: float) -> dict:
    """Failures of an extended-Hamming (SECDED) decoder on n bits: t = 1, and every 2-bit error is flagged.

    `block_failure` = P(2 or more errors), exact.  The split assumes the usual decoder: an odd number of
    errors makes the overall parity odd, so 3, 5, ... errors are taken as one error and "corrected" into a
    wrong word (`undetected`); an even number of 2 or more is flagged (`detected`).  Two approximations,
    both small and stated: in a shortened code some odd-weight patterns point at a removed column and are
    flagged instead (so `undetected` is an upper bound on those), and the even-weight patterns that happen
    to be codewords (weight 4 and up, about 2^-(n-k) of them) pass unseen.
    """
    return {
        "block_failure": tail(n, 1, p),
        "detected": _parity_sum(n, 2, 0, p),
        "undetected": _parity_sum(n, 3, 1, p),
        "two_errors": math.exp(log_pmf(n, 2, p)),
    }


def syndrome_split(columns: list[int], r: int, f: float, secded: bool,
                   max_work: float = 1e8) -> dict:
    """Exact detected / undetected split of a single-error-correcting decoder with parity-check columns
    `columns` (one r-bit int per code bit, all n of them, data and check bits).

    The decoder: syndrome 0 -> accepted as clean; for SECDED an even-weight non-zero syndrome -> flagged;
    a syndrome equal to a column -> that bit flipped; any other syndrome -> flagged.  With 2 or more
    errors every accepted outcome leaves wrong data (a miscorrection can only leave the data right when
    all errors sit in check bits, and then the syndrome has the weight of the errors, which no check
    column of weight 1 matches), so `undetected` counts the patterns of weight w >= 2 whose syndrome is 0
    or a column.  The counts come from a dynamic programme over the columns: N[w][s] = number of weight-w
    patterns with syndrome s.  Weights up to W are exact, W chosen so that P(more than W errors) is below
    1e-12 of the failure; any weight beyond W (only when the work would exceed `max_work`) is counted with
    a uniformly random syndrome of the right parity and reported in `approx_mass`.
    """
    n = len(columns)
    size = 1 << r
    fail_log = log_tail(n, 1, f)
    if fail_log == -math.inf:
        return {"block_failure": 0.0, "detected": 0.0, "undetected": 0.0, "exact_weights": 0,
                "approx_mass": 0.0}
    top = 2
    while top < n and log_tail(n, top, f) > fail_log + math.log(1e-12):
        top += 1
    top = min(top, n, max(2, int(max_work / max(1, n * size))))
    counts = np.zeros((top + 1, size))
    counts[0, 0] = 1.0
    idx = np.arange(size)
    for c in columns:
        counts[1:] += counts[:-1][:, idx ^ c]
    odd = np.array([bin(v).count("1") % 2 for v in range(size)], dtype=bool)
    accept = np.zeros(size, dtype=bool)
    accept[np.asarray(columns, dtype=np.int64)] = True
    if secded:
        accept &= odd                          # an even non-zero syndrome is flagged before any lookup
    accept[0] = True
    und_terms, det_terms = [], []
    lf, lg = math.log(f), math.log1p(-f)
    for w in range(2, top + 1):
        und = float(counts[w][accept].sum())
        total = math.comb(n, w)
        det = float(total - und) if total - und > 0 else 0.0
        base = w * lf + (n - w) * lg
        if und > 0:
            und_terms.append(math.log(und) + base)
        if det > 0:
            det_terms.append(math.log(det) + base)
    undetected = math.exp(_logsumexp(np.array(und_terms))) if und_terms else 0.0
    detected = math.exp(_logsumexp(np.array(det_terms))) if det_terms else 0.0
    rest = tail(n, top, f) if top < n else 0.0
    if rest > 0.0:
        # beyond the exact weights: a syndrome uniform over its parity class
        frac_odd = float(accept[odd].sum()) / (size // 2)
        frac_even = float(accept[~odd].sum()) / (size // 2)
        frac = 0.5 * (frac_odd + frac_even)
        undetected += rest * frac
        detected += rest * (1.0 - frac)
    return {"block_failure": math.exp(fail_log), "detected": detected, "undetected": undetected,
            "exact_weights": top, "approx_mass": rest}


# -- CRC with repetition --------------------------------------------------------------------------------

def vote_error(copies: int, f: float) -> float:
    """Chance that the bitwise majority vote over `copies` copies of one bit is wrong.

    Odd copies: more than half flipped.  Even copies: more than half flipped, or exactly half with copy
    0 among them (the decoder keeps copy 0's bit on a tie); by symmetry copy 0 is among the flipped in
    half of the tie patterns.
    """
    if copies == 1:
        return f
    half = copies // 2
    wrong = tail(copies, half, f)
    if copies % 2 == 0:
        wrong += 0.5 * math.exp(log_pmf(copies, half, f))
    return wrong


def _vote_wrong(j: int, first_flipped: int, copies: int) -> bool:
    return 2 * j > copies or (2 * j == copies and bool(first_flipped))


def _transition(copies: int, f: float) -> np.ndarray:
    """One bit position's transition matrix of the frame's state (damaged others a, copy 0 damaged b,
    vote wrong so far w); index = (a * 2 + b) * 2 + w.  All entries are non-negative probabilities."""
    c1 = copies - 1
    size = copies * 4
    g = 1.0 - f
    pf = [[math.comb(r, u) * f ** u * g ** (r - u) for u in range(r + 1)] for r in range(c1 + 1)]
    T = np.zeros((size, size))
    for a in range(copies):
        for x0, p0 in ((0, g), (1, f)):
            for u in range(a + 1):
                pu = pf[a][u]
                for v in range(c1 - a + 1):
                    pv = pf[c1 - a][v]
                    wrong = _vote_wrong(x0 + u + v, x0, copies)
                    prob = p0 * pu * pv
                    for b in (0, 1):
                        nb = b | x0
                        for w in (0, 1):
                            nw = w | int(wrong)
                            T[(a * 2 + b) * 2 + w, ((a + v) * 2 + nb) * 2 + nw] += prob
    return T


def _frame_states(copies: int, bits: int, f: float) -> np.ndarray:
    """State distribution after `bits` positions, starting clean: the start row of T^bits."""
    T = _transition(copies, f)
    vec = np.zeros(T.shape[0])
    vec[0] = 1.0
    e = bits
    while e:
        if e & 1:
            vec = vec @ T
        e >>= 1
        if e:
            T = T @ T
    return vec


def crc_repetition(copies: int, block_bits: int, crc_width: int, f: float) -> dict:
    """CRC + repetition over a frame of `copies` copies of a block of `block_bits` bits (data + CRC).

    The decoder votes bitwise (copies >= 3) and keeps the voted block when its CRC passes; otherwise it
    takes the first copy whose CRC passes.  Ignoring the CRC's own misses, the frame fails exactly when
    the voted block is wrong *and* every copy is damaged (for copies <= 2: every copy damaged).  That joint
    probability is computed exactly by a Markov chain over the bit positions (state: how many copies are
    damaged so far, whether copy 0 is, whether any vote was wrong), raised to the block length by
    repeated squaring of a non-negative matrix, so there is no cancellation at tiny values.

    `crc_undetected` is an ESTIMATE, not an exact figure: a damaged block passes a width-w CRC with
    probability about 2^-w (true for error patterns that look random to the CRC; patterns lighter than
    the CRC's Hamming distance are always caught, so at small f this overstates the risk), times the
    number of damaged blocks the decoder checks (at most copies + 1 after a wrong vote).
    """
    block_damaged = any_of(block_bits, f)
    miss = 2.0 ** -crc_width
    if copies <= 2:
        failure = block_damaged ** copies
        checks = sum(block_damaged ** j for j in range(1, copies + 1))
        vote = None
        vote_block = None
    else:
        states = _frame_states(copies, block_bits, f)
        full = ((copies - 1) * 2 + 1) * 2 + 1
        failure = float(states[full])
        vote = vote_error(copies, f)
        vote_block = any_of(block_bits, vote)
        checks = vote_block * (copies + 1)
    return {
        "block_failure": min(1.0, failure),
        "vote_bit_error": vote,
        "vote_block_error": vote_block,
        "block_damaged": block_damaged,
        "crc_undetected": min(1.0, miss * checks),
    }


# -- finite-length limit ----------------------------------------------------------------------------------

def dispersion(f: float) -> float:
    """Channel dispersion of the BSC, bits^2: V = f (1 - f) log2^2((1 - f) / f)."""
    return f * (1.0 - f) * (math.log((1.0 - f) / f) / LN2) ** 2


def qinv(eps: float) -> float:
    """Inverse of the Gaussian tail Q(x) = P(N(0,1) > x); accurate down to eps ~ 1e-300."""
    if not 0.0 < eps < 1.0:
        raise ValueError(f"eps must be in (0, 1) (got {eps})")
    return -NormalDist().inv_cdf(eps)


def normal_approx_rate(n: int, f: float, eps: float) -> float:
    """Largest rate of a length-n binary code with block error eps on the BSC(f), by the normal
    approximation R* = C - sqrt(V/n) Q^-1(eps) + log2(n) / (2n) (Polyanskiy, Poor, Verdu 2010);
    n in channel bits.  Returns nan where eps is not in (0, 1)."""
    if not 0.0 < eps < 1.0:
        return math.nan
    return capacity(f) - math.sqrt(dispersion(f) / n) * qinv(eps) + math.log2(n) / (2.0 * n)


# -- the channel ------------------------------------------------------------------------------------------

class BSC(Channel):
    """The binary symmetric channel: every bit flips independently with probability flip_prob."""

    kind = "bsc"

    def at(self, flip_prob: float) -> "BSC":
        return BSC(flip_prob)

    def unit_error(self, unit_bits: int) -> float:
        return symbol_error(self.flip_prob, unit_bits)

    def units_failure(self, n: int, unit_bits: int, t: int) -> float:
        return bounded_distance_failure(n, t, self.unit_error(unit_bits))

    def flip_positions(self, rng: np.random.Generator, bits: int) -> np.ndarray:
        flips = int(rng.binomial(bits, self.flip_prob))
        if not flips:
            return np.zeros(0, dtype=np.int64)
        return rng.choice(bits, flips, replace=False)
