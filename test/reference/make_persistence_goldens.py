#!/usr/bin/python3
"""Reference persistence diagrams for Loopwise's engine (test/engine/persistence.golden.test.ts).

Run with Debian's Python (it has gudhi 3.7.1 and numpy):

    /usr/bin/python3 test/reference/make_persistence_goldens.py

For every seeded case it writes test/reference/goldens/persistence/<name>.json holding the
compressed lower triangle of distances (6 significant digits), the options, and the diagrams
computed by the `ripser` binary (Debian package 1.2.1). The same diagrams are recomputed with
GUDHI (RipsComplex + SimplexTree.persistence over GF(2)) and the script stops if the two
disagree, so every golden is vouched for by two independent implementations.

Why 6 significant digits: ripser reads distances as float32 and prints with 6 significant
digits; a 6-digit decimal survives float32 and back unchanged (FLT_DIG = 6), so ripser's
printed births and deaths are exactly the input decimals.

Comparison rule (here and in the tests): round every value to float32, drop intervals of
zero length, compare the multisets of (birth, death) per dimension; death None = infinite.

Without a threshold ripser stops at the enclosing radius (the least r at which some node is
within r of all others; from there on the complex is a cone) while GUDHI, given no
max_edge_length, builds the full complex. The cone is contractible, so every class of
dimension >= 1 dies by the enclosing radius and H0 is one component there: the diagrams must
be identical, and the script checks that they are for every case without a threshold.
"""

import json
import os
import subprocess
import sys

import gudhi
import numpy as np

OUT = os.path.join(os.path.dirname(os.path.abspath(__file__)), 'goldens', 'persistence')
RIPSER = 'ripser'


def ripser_version():
    out = subprocess.run(['dpkg-query', '-W', '-f=${Version}', 'ripser'], capture_output=True, text=True)
    return out.stdout.strip() or 'unknown'


def six(x):
    """The value rounded to 6 significant digits, as a Python float (its repr is the short decimal)."""
    return float('%.6g' % x)


def lower_triangle(d):
    n = d.shape[0]
    return [six(d[i, j]) for i in range(n) for j in range(i)]


def full_from_lower(lower, n):
    d = np.zeros((n, n))
    k = 0
    for i in range(n):
        for j in range(i):
            d[i, j] = d[j, i] = lower[k]
            k += 1
    return d


# ---------------------------------------------------------------------------------------------
# Case generators. Each returns an n × n symmetric matrix with zero diagonal.


def euclidean(rng, n, dim):
    x = rng.random((n, dim))
    return np.sqrt(((x[:, None, :] - x[None, :, :]) ** 2).sum(-1))


def noisy_circles(rng, n, circles, noise):
    pts = []
    for c in range(circles):
        m = n // circles + (1 if c < n % circles else 0)
        t = rng.random(m) * 2 * np.pi
        centre = rng.random(2) * 4
        r = 0.5 + rng.random()
        pts.append(np.c_[centre[0] + r * np.cos(t), centre[1] + r * np.sin(t)] + noise * rng.standard_normal((m, 2)))
    x = np.vstack(pts)
    return np.sqrt(((x[:, None, :] - x[None, :, :]) ** 2).sum(-1))


def noisy_sphere(rng, n, noise):
    x = rng.standard_normal((n, 3))
    x /= np.linalg.norm(x, axis=1, keepdims=True)
    x += noise * rng.standard_normal((n, 3))
    return np.sqrt(((x[:, None, :] - x[None, :, :]) ** 2).sum(-1))


def nonmetric(rng, n):
    a = rng.random((n, n)) + 0.001
    d = np.tril(a, -1)
    return d + d.T


def correlation(rng, n, blocks, t_len, strength):
    """1 − r of random time series where nodes in the same block share a latent signal."""
    labels = rng.integers(0, blocks, n)
    latent = rng.standard_normal((blocks, t_len))
    x = strength * latent[labels] + rng.standard_normal((n, t_len))
    r = np.corrcoef(x)
    d = 1 - r
    np.fill_diagonal(d, 0)
    return np.clip(d, 1e-6, None) * (1 - np.eye(n))


def quantised(d, levels):
    """Values rounded onto `levels` steps of the range: many exact ties."""
    off = d[~np.eye(d.shape[0], dtype=bool)]
    lo, hi = off.min(), off.max()
    step = (hi - lo) / levels
    q = lo + np.round((d - lo) / step) * step
    q = np.maximum(q, step)  # keep off-diagonal values positive
    np.fill_diagonal(q, 0)
    return q


def with_duplicates(rng, n, dim, dup):
    x = rng.random((n - dup, dim))
    x = np.vstack([x, x[rng.integers(0, n - dup, dup)]])
    return np.sqrt(((x[:, None, :] - x[None, :, :]) ** 2).sum(-1))


def quantile_threshold(lower, q):
    return six(float(np.quantile(np.array(lower), q)))


# ---------------------------------------------------------------------------------------------
# Reference computations.


def run_ripser(lower, n, max_dim, threshold, path):
    with open(path + '.lower', 'w') as f:
        k = 0
        for i in range(1, n):
            f.write(','.join('%.6g' % lower[k + j] for j in range(i)) + '\n')
            k += i
    cmd = [RIPSER, '--dim', str(max_dim)]
    if threshold is not None:
        cmd += ['--threshold', '%.6g' % threshold]
    cmd += ['--format', 'lower-distance', os.path.basename(path) + '.lower']
    out = subprocess.run(cmd, capture_output=True, text=True, check=True, cwd=os.path.dirname(path))
    os.remove(path + '.lower')
    return parse_ripser(out.stdout, max_dim), ' '.join(cmd)


def parse_ripser(text, max_dim):
    diagrams = [[] for _ in range(max_dim + 1)]
    dim = None
    for line in text.splitlines():
        line = line.strip()
        if line.startswith('persistence intervals in dim'):
            dim = int(line.rstrip(':').split()[-1])
        elif line.startswith('[') and dim is not None:
            b, d = line[1:-1].split(',')
            diagrams[dim].append([float(b), None if d.strip() == '' else float(d)])
    return diagrams


def run_gudhi(lower, n, max_dim, threshold):
    d = full_from_lower(lower, n)
    kwargs = {'distance_matrix': d}
    if threshold is not None:
        kwargs['max_edge_length'] = threshold
    st = gudhi.RipsComplex(**kwargs).create_simplex_tree(max_dimension=max_dim + 1)
    pairs = st.persistence(homology_coeff_field=2, min_persistence=-1)
    diagrams = [[] for _ in range(max_dim + 1)]
    for dim, (b, dd) in pairs:
        if dim <= max_dim:
            diagrams[dim].append([b, None if dd == float('inf') else dd])
    return diagrams


def canonical(diagrams):
    """float32-rounded, zero-length dropped, sorted: the multiset the tests compare."""
    out = []
    for dg in diagrams:
        rows = []
        for b, d in dg:
            b32 = float(np.float32(b))
            d32 = None if d is None else float(np.float32(d))
            if d32 is not None and d32 == b32:
                continue
            rows.append((b32, float('inf') if d32 is None else d32))
        out.append(sorted(rows))
    return out


# ---------------------------------------------------------------------------------------------


def cases():
    """(name, description, matrix, maxDim, threshold: a quantile, 'mid', 'level' or None)."""
    rng = np.random.default_rng(20261202)
    out = []

    def add(name, desc, d, max_dim, q=None):
        out.append((name, desc, d, max_dim, q))

    # Euclidean point clouds.
    for n, dim, md in [(4, 2, 1), (5, 2, 2), (8, 2, 2), (12, 3, 2), (20, 2, 2), (30, 3, 2), (50, 2, 1),
                       (60, 3, 2), (120, 2, 1), (200, 3, 1)]:
        add(f'euclid-{dim}d-n{n}', f'{n} uniform random points in the unit {dim}-cube, Euclidean distance',
            euclidean(rng, n, dim), md)
    for n, dim, md, q in [(25, 2, 2, 0.3), (40, 3, 2, 0.15), (80, 3, 2, 0.1), (150, 2, 1, 0.08)]:
        add(f'euclid-{dim}d-n{n}-cap', f'{n} uniform random points in the unit {dim}-cube, capped at the '
            f'{q:.0%} quantile of distances', euclidean(rng, n, dim), md, q)
    add('circles-n60', 'two noisy circles of 30 points each (long H1 bars)', noisy_circles(rng, 60, 2, 0.05), 2)
    add('circles-n90-cap', 'three noisy circles, capped at the 20% quantile (essential H1 classes)',
        noisy_circles(rng, 90, 3, 0.04), 1, 0.2)
    add('sphere-n40', '40 noisy points on the unit sphere (an H2 class)', noisy_sphere(rng, 40, 0.03), 2)
    add('sphere-n70', '70 noisy points on the unit sphere', noisy_sphere(rng, 70, 0.02), 2)
    add('sphere-n50-cap', '50 points on the sphere capped at the 40% quantile', noisy_sphere(rng, 50, 0.02), 2, 0.4)
    add('duplicates-n20', '20 points in the plane, 5 of them duplicates (zero distances)',
        with_duplicates(rng, 20, 2, 5), 2)
    add('euclid-2d-n300', '300 uniform random points in the unit square', euclidean(rng, 300, 2), 1)

    # Random symmetric, not a metric.
    for n, md in [(4, 1), (6, 2), (10, 2), (16, 2), (35, 2), (70, 1), (100, 1)]:
        add(f'nonmetric-n{n}', f'{n} nodes, independent uniform distances on (0.001, 1.001), triangle '
            'inequality not enforced', nonmetric(rng, n), md)
    for n, md, q in [(18, 2, 0.5), (45, 2, 0.25), (130, 1, 0.1)]:
        add(f'nonmetric-n{n}-cap', f'{n} nodes, uniform distances, capped at the {q:.0%} quantile',
            nonmetric(rng, n), md, q)

    # Correlation-derived.
    for n, blocks, t_len, s, md in [(10, 2, 40, 1.0, 2), (24, 3, 60, 0.8, 2), (48, 4, 100, 0.7, 2),
                                    (90, 5, 150, 0.6, 1), (160, 6, 200, 0.5, 1), (300, 7, 200, 0.5, 1)]:
        add(f'corr-n{n}', f'1 − r of {n} random series of length {t_len} in {blocks} blocks sharing a latent '
            f'signal (weight {s})', correlation(rng, n, blocks, t_len, s), md)
    for n, blocks, md, q in [(32, 3, 2, 0.3), (110, 5, 1, 0.15)]:
        add(f'corr-n{n}-cap', f'1 − r of {n} block-structured series, capped at the {q:.0%} quantile',
            correlation(rng, n, blocks, 120, 0.7), md, q)

    # Many ties.
    for n, levels, md in [(7, 3, 2), (12, 4, 2), (20, 5, 2), (36, 6, 2), (64, 8, 1), (140, 10, 1)]:
        add(f'ties-nonmetric-n{n}', f'{n} nodes, uniform distances quantised to {levels} levels (heavy ties)',
            quantised(nonmetric(rng, n), levels), md)
    for n, levels, md in [(15, 5, 2), (40, 8, 2), (75, 12, 1)]:
        add(f'ties-euclid-n{n}', f'{n} random points in the plane, distances quantised to {levels} levels',
            quantised(euclidean(rng, n, 2), levels), md)
    for n, levels, md, q in [(22, 6, 2, 0.5), (55, 10, 2, 0.3), (120, 12, 1, 0.2)]:
        add(f'ties-corr-n{n}-cap', f'1 − r of {n} block series quantised to {levels} levels, capped at the '
            f'{q:.0%} quantile', quantised(correlation(rng, n, 4, 80, 0.7), levels), md, q)
    add('ties-grid-n16', '4 × 4 grid in the plane, Manhattan distances (integer ties, square loops)',
        np.abs(np.subtract.outer(np.arange(16) // 4, np.arange(16) // 4))
        + np.abs(np.subtract.outer(np.arange(16) % 4, np.arange(16) % 4)).astype(float), 2)

    # Caps at the edges of the range (a second stream, so the cases above stay as they are).
    rng2 = np.random.default_rng(20261203)
    add('euclid-3d-n30-cap-above-radius', '30 random points in the unit cube, capped halfway between the '
        'enclosing radius and the largest distance (the cap changes nothing)', euclidean(rng2, 30, 3), 2, 'mid')
    add('nonmetric-n20-cap-at-max', '20 nodes, uniform distances, capped exactly at the largest distance',
        nonmetric(rng2, 20), 2, 1.0)
    add('ties-nonmetric-n25-cap-on-level', '25 nodes, distances on 6 levels, capped exactly at the 3rd level '
        '(many edges tie with the cap)', quantised(nonmetric(rng2, 25), 6), 2, 'level')
    return out


def main():
    os.makedirs(OUT, exist_ok=True)
    rv = ripser_version()
    gv = gudhi.__version__
    count = 0
    total = 0
    for name, desc, d, max_dim, q in cases():
        n = d.shape[0]
        lower = lower_triangle(d)
        if q == 'mid':
            radius = full_from_lower(lower, n).max(axis=1).min()
            threshold = six((radius + max(lower)) / 2)
            assert radius < threshold < max(lower)
        elif q == 'level':
            threshold = sorted(set(lower))[2]
        else:
            threshold = None if q is None else quantile_threshold(lower, q)
        path = os.path.join(OUT, name)
        rdg, cmd = run_ripser(lower, n, max_dim, threshold, path)
        gdg = run_gudhi(lower, n, max_dim, threshold)
        cr, cg = canonical(rdg), canonical(gdg)
        if cr != cg:
            for dim in range(max_dim + 1):
                if cr[dim] != cg[dim]:
                    print(f'{name}: H{dim} differs\n ripser {cr[dim][:10]}\n gudhi  {cg[dim][:10]}', file=sys.stderr)
            sys.exit(f'ripser and GUDHI disagree on {name}')
        golden = {
            'name': name,
            'description': desc,
            'n': n,
            'maxDim': max_dim,
            'threshold': threshold,
            'lower': lower,
            'diagrams': rdg,
            'source': {
                'ripser': rv,
                'gudhi': gv,
                'command': cmd.replace(name + '.lower', '<lower triangle file>'),
                'gudhiCall': 'gudhi.RipsComplex(distance_matrix=D'
                + ('' if threshold is None else ', max_edge_length=%.6g' % threshold)
                + f').create_simplex_tree(max_dimension={max_dim + 1})'
                '.persistence(homology_coeff_field=2, min_persistence=-1)',
                'agreement': 'ripser and GUDHI diagrams equal after float32 rounding, zero-length intervals dropped',
                'generator': 'test/reference/make_persistence_goldens.py (numpy default_rng seed 20261202)',
            },
        }
        text = json.dumps(golden, separators=(',', ':'))
        with open(path + '.json', 'w') as f:
            f.write(text + '\n')
        count += 1
        total += len(text)
        bars = ' '.join(f'H{k}:{len(cr[k])}' for k in range(max_dim + 1))
        print(f'{name:28s} n={n:3d} dim≤{max_dim} thr={threshold}  {bars}')
    print(f'{count} goldens, {total / 1e6:.2f} MB, ripser {rv}, gudhi {gv}')


if __name__ == '__main__':
    main()
