"""Reproducible draws of the uncertain inputs: the sample set of a call (plain Monte Carlo or
scrambled Sobol), kept read-only so every later number of the call uses the same trials.

With ``method="mc-per-species"`` every input has its own stream, keyed by the seed, the
species-phase id and the quantity: an input draws the same values in every call with that seed,
whichever other species the call holds. A table of reactions drawn once and each reaction drawn
alone therefore see the same numbers, and reactions that share a species stay correlated.
"""

from __future__ import annotations

import hashlib
import secrets
from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np
from scipy import special
from scipy.stats import qmc

from ..conditions import read_trials
from ..errors import InvalidInput, InvalidUncertainty
from .inputs import METHODS, InputKey, Method, UncertainInput

__all__ = ["SampleSet", "draw_samples", "extend_samples"]

# Columns transformed at a time when correlating draws (bounds the temporary to ~8 MB at d = 16).
_COLUMN_CHUNK = 65536
# Uniform draws are kept inside (2^-53, 1 - 2^-53) so that inverse CDFs stay finite.
_U_EPS = 2.0**-53


@dataclass
class SampleSet:
    """Draws of every input, kept so that any temperature is evaluated without re-sampling.

    ``values`` has shape (n, N): one row per input, one column per trial, in SI, as deviations
    from the library values (library nominal + value = the sampled value). Inputs are rows so
    that the linear part of every model is one matrix product into temperature-major rows. The
    array is read-only: every result computed from a sample set refers to the same draws.
    """

    inputs: list[UncertainInput]
    values: np.ndarray
    method: str
    seed: int | None
    correlation: np.ndarray | None = None
    blocks: list[int] = field(default_factory=list)
    rng: np.random.Generator | None = field(default=None, repr=False)
    _moments: tuple[np.ndarray, np.ndarray] | None = field(
        default=None, init=False, repr=False, compare=False
    )

    def __post_init__(self) -> None:
        # Kept draws are never changed in place (their moments are computed once and kept, and
        # a record's recomputation depends on them): make that a guarantee.
        self.values.flags.writeable = False

    @property
    def n(self) -> int:
        return int(self.values.shape[1])

    @property
    def keys(self) -> list[InputKey]:
        return [inp.key for inp in self.inputs]

    def index(self, key: InputKey) -> int:
        return self.keys.index(key)

    def subset(self, keys: Sequence[InputKey]) -> SampleSet:
        """The draws of these inputs only, in this order (a copy of their rows).

        For ``method="mc-per-species"`` without correlations this is bitwise the sample set that
        :func:`draw_samples` gives for those inputs alone with the same seed and trials.
        """
        where = {k: i for i, k in enumerate(self.keys)}
        missing = [k for k in keys if k not in where]
        if missing:
            raise InvalidInput(
                "draws",
                "SampleSet.subset",
                "draws holding every input asked for (draw samples for every species of the "
                "reactions you compare)",
                "draws without " + ", ".join(f"{k[0]} {k[1]}" for k in missing[:6]),
            )
        idx = [where[k] for k in keys]
        corr = None if self.correlation is None else self.correlation[np.ix_(idx, idx)]
        return SampleSet(
            [self.inputs[i] for i in idx],
            self.values[idx],
            self.method,
            self.seed,
            corr,
            list(self.blocks),
            None,
        )


def _stream(seed: int, key: InputKey, block: int) -> np.random.Generator:
    """The generator of one input's block of trials under ``method="mc-per-species"``.

    The key enters through SHA-256 (stable across processes, platforms and Python versions,
    unlike ``hash``) as a spawn key of the seed's SeedSequence: streams of different inputs and
    blocks are independent by NumPy's construction.
    """
    digest = hashlib.sha256(f"{key[0]}\x1f{key[1]}".encode()).digest()
    words = tuple(int.from_bytes(digest[i : i + 4], "little") for i in range(0, 16, 4))
    return np.random.Generator(
        np.random.PCG64(np.random.SeedSequence(seed, spawn_key=(*words, block)))
    )


def _keyed_normals(keys: Sequence[InputKey], n: int, seed: int, block: int) -> np.ndarray:
    """Standard normal draws, shape (d, n), row j from input j's own stream."""
    z = np.empty((len(keys), n))
    for j, key in enumerate(keys):
        _stream(seed, key, block).standard_normal(n, out=z[j])
    return z


def _normal_draws(rng: np.random.Generator, n: int, d: int, method: str) -> np.ndarray:
    """Standard normal draws, shape (d, n)."""
    if method == "mc":
        return rng.standard_normal((d, n))
    sobol = qmc.Sobol(d, scramble=True, rng=rng)
    u = np.clip(sobol.random(n).T, _U_EPS, 1.0 - _U_EPS)
    return special.ndtri(u)


def _transform(
    inputs: Sequence[UncertainInput], z: np.ndarray, corr: np.ndarray | None
) -> np.ndarray:
    """Turn standard normal draws (d, n) into input deviations, in place (memory stays 1×)."""
    if corr is not None:
        w, v = np.linalg.eigh(corr)
        root = v * np.sqrt(np.clip(w, 0.0, None))  # corr = root @ root.T, also when singular
        step = _COLUMN_CHUNK
        for a in range(0, z.shape[1], step):
            z[:, a : a + step] = root @ z[:, a : a + step]
    for j, inp in enumerate(inputs):
        if inp.is_normal:
            z[j] *= inp.u
            z[j] += inp.shift
        else:
            z[j] = inp.from_uniform(np.clip(special.ndtr(z[j]), _U_EPS, 1 - _U_EPS))
    return z


def draw_samples(
    inputs: Sequence[UncertainInput],
    n: int,
    *,
    method: Method = "mc",
    seed: int | None = None,
    correlation: np.ndarray | None = None,
) -> SampleSet:
    """N reproducible draws of every input (plain MC or scrambled Sobol, N a power of two).

    The same seed gives bitwise-identical draws on the same platform and library versions.
    """
    if not isinstance(n, (int, np.integer)) or isinstance(n, bool) or n < 2:
        raise InvalidUncertainty(f"number of trials {n!r}: need an integer of at least 2")
    n = read_trials(n, "samples", "draw_samples", n_inputs=len(inputs))  # before allocating
    if method not in METHODS:
        raise InvalidUncertainty(
            f"sampling method {method!r}: use " + ", ".join(repr(m) for m in METHODS)
        )
    if method == "sobol" and n & (n - 1):
        lower = 1 << (int(n).bit_length() - 1)
        raise InvalidUncertainty(
            f"Sobol sampling needs a power of two trials; {n} is not (use {lower} or {lower * 2})"
        )
    if seed is not None and (not isinstance(seed, (int, np.integer)) or seed < 0):
        raise InvalidUncertainty(f"seed {seed!r}: use a non-negative integer")
    if not inputs:
        raise InvalidUncertainty(
            "inputs",
            "draw_samples",
            "at least one uncertain input (every species here has exact values, so there is "
            "nothing to sample; the call needs no Monte Carlo)",
            [],
        )
    if method == "mc-per-species":
        # Without a seed one is drawn and kept, so the call (and its further blocks) can be
        # repeated from the sample set's own seed.
        seed = secrets.randbits(63) if seed is None else int(seed)
        z = _keyed_normals([inp.key for inp in inputs], int(n), seed, 0)
        x = _transform(inputs, z, correlation)
        return SampleSet(list(inputs), x, method, seed, correlation, [int(n)], None)
    rng = np.random.default_rng(seed)
    z = _normal_draws(rng, int(n), len(inputs), method)
    x = _transform(inputs, z, correlation)
    return SampleSet(list(inputs), x, method, seed, correlation, [int(n)], rng)


def extend_samples(samples: SampleSet, n: int) -> SampleSet:
    """Append a further block of n trials from the same generator (JCGM 101 §7.9 blocks).

    Sobol blocks are independent scrambles, so blocks stay independent as §7.9 requires.
    """
    if samples.method == "mc-per-species" and samples.seed is not None:
        z = _keyed_normals(samples.keys, n, samples.seed, len(samples.blocks))
    elif samples.rng is None:
        raise InvalidInput(
            "samples",
            "extend_samples",
            "a sample set drawn by draw_samples, which carries its generator",
            f"a sample set of {samples.n} trials without one",
        )
    else:
        z = _normal_draws(samples.rng, n, len(samples.inputs), samples.method)
    x = _transform(samples.inputs, z, samples.correlation)
    return SampleSet(
        samples.inputs,
        np.hstack([samples.values, x]),
        samples.method,
        samples.seed,
        samples.correlation,
        [*samples.blocks, n],
        samples.rng,
    )
