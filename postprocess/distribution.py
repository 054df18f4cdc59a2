"""Force distributions along a span coordinate s, integrated exactly.

A :class:`SpanLoad` is a set of linearly varying pieces (N/m of s) plus concentrated
forces (N) at given s. Cumulative force and first moment to the left of any station are
computed in closed form, vectorized over stations and pieces.

Array conventions: ``pieces`` has shape (n, 4) with columns (s_start, s_end, w_start,
w_end); ``points`` has shape (m, 2) with columns (s, force). Units are SI.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["SpanLoad"]


@dataclass(frozen=True, eq=False)
class SpanLoad:
    pieces: np.ndarray  # (n, 4): s0, s1, w0, w1 (m, m, N/m, N/m)
    points: np.ndarray  # (m, 2): s, P (m, N)

    @classmethod
    def empty(cls) -> SpanLoad:
        return cls(np.zeros((0, 4)), np.zeros((0, 2)))

    @classmethod
    def concat(cls, loads: list[SpanLoad]) -> SpanLoad:
        if not loads:
            return cls.empty()
        return cls(
            np.concatenate([ld.pieces for ld in loads] + [np.zeros((0, 4))]),
            np.concatenate([ld.points for ld in loads] + [np.zeros((0, 2))]),
        )

    def total(self) -> float:
        p = self.pieces
        return float(np.sum(0.5 * (p[:, 2] + p[:, 3]) * (p[:, 1] - p[:, 0])) + np.sum(self.points[:, 1]))

    def cumulative(self, s: np.ndarray, inclusive: bool = False) -> tuple[np.ndarray, np.ndarray]:
        """Force F(s) = ∫_{σ<s} w dσ and moment M(s) = ∫_{σ<s} w (s − σ) dσ (N, N·m).

        Concentrated forces exactly at s count only when ``inclusive`` is true.
        """
        s = np.atleast_1d(np.asarray(s, dtype=float))
        force = np.zeros_like(s)
        moment = np.zeros_like(s)
        if len(self.pieces):
            a, b, wa, wb = (self.pieces[:, i][None, :] for i in range(4))
            length = b - a
            slope = np.divide(wb - wa, length, out=np.zeros_like(length), where=length > 0)
            h = np.clip(s[:, None], a, b) - a  # covered part of each piece
            f = wa * h + 0.5 * slope * h**2
            first = 0.5 * wa * h**2 + slope * h**3 / 3.0  # ∫ w (σ − a)
            force += f.sum(axis=1)
            moment += ((s[:, None] - a) * f - first).sum(axis=1)
        if len(self.points):
            ps, pf = self.points[:, 0][None, :], self.points[:, 1][None, :]
            left = ps <= s[:, None] if inclusive else ps < s[:, None]
            force += np.where(left, pf, 0.0).sum(axis=1)
            moment += np.where(left, pf * (s[:, None] - ps), 0.0).sum(axis=1)
        return force, moment

    def breakpoints(self) -> np.ndarray:
        return np.unique(np.concatenate([self.pieces[:, 0], self.pieces[:, 1], self.points[:, 0]]))
