#!/usr/bin/python3
"""Reference values for Loopwise's feature engine (test/engine/features/*.test.ts).

Run with Debian's Python (GUDHI 3.7.1, scikit-learn 1.2.1, SciPy 1.10.1, NumPy 1.24.2):

    /usr/bin/python3 test/reference/make_feature_refs.py

Writes test/reference/goldens/features/:

  curves.json      seeded point clouds and correlation matrices (distances to 6 significant digits),
                   with, from GUDHI: the persistence diagrams (RipsComplex + SimplexTree), simplex
                   counts by filtration value of the K-skeleton (K = maxDim + 1) on a grid, the Euler
                   curve and its exact integral, the Betti curves of the K-skeleton including the top
                   dimension (persistence_dim_max=True), and from gudhi.representations on the finite
                   part of the diagrams: BettiCurve (predefined grid), Landscape (sample_range = the
                   grid's ends, resolution = grid points, so its grid is the same linspace),
                   PersistenceImage (im_range, resolution, bandwidth, linear weight min(1, p / pMax))
                   and Entropy (scalar); interval statistics by NumPy.
  partitions.json  label vectors with sklearn.metrics.adjusted_rand_score, and participation-like
                   matrices clustered by scipy.cluster.hierarchy (average linkage, cosine, maxclust k).
  group.json       correlation matrices and their Fisher-z mean tanh(mean(arctanh r)); numpy.percentile
                   (linear, the default) of a few samples.

Conventions matched (and transformed where they differ), stated again in the tests:
  * gudhi Landscape returns sqrt(2) times Bubenik's landscape; we store gudhi's values as given and
    the test multiplies ours by sqrt(2).
  * gudhi BettiCurve counts b <= t < d, as ours does.
  * gudhi PersistenceImage samples the Gaussian density at np.linspace points of im_range, flattened
    persistence-major; ours does the same.
  * gudhi Entropy uses the natural log over all points given; we give it the finite intervals.
"""

import json
import math
import os

import gudhi
import gudhi.representations as gr
import numpy as np
import scipy
import sklearn
from scipy.cluster.hierarchy import fcluster, linkage
from sklearn.metrics import adjusted_rand_score

OUT = os.path.join(os.path.dirname(os.path.abspath(__file__)), 'goldens', 'features')
SOURCE = {
    'gudhi': gudhi.__version__,
    'sklearn': sklearn.__version__,
    'scipy': scipy.__version__,
    'numpy': np.__version__,
}


def six(x):
    return float('%.6g' % x)


def jnum(x):
    """Infinity as null, so the file is plain JSON."""
    x = float(x)
    return None if math.isinf(x) else x


def pairwise(points):
    diff = points[:, None, :] - points[None, :, :]
    d = np.sqrt((diff ** 2).sum(-1))
    return np.vectorize(six)(d)


def lower(d):
    n = d.shape[0]
    return [float(d[i, j]) for i in range(n) for j in range(i)]


def intervals_of(st, dim):
    iv = st.persistence_intervals_in_dimension(dim)
    iv = np.asarray(iv, dtype=float).reshape(-1, 2)
    return iv[iv[:, 1] > iv[:, 0]] if len(iv) else iv


def betti_from(iv, grid):
    return [int(np.sum((iv[:, 0] <= t) & (t < iv[:, 1]))) for t in grid]


def case(name, d, max_dim, grid_points=41, levels=3, image_res=(7, 5), hi=None):
    n = d.shape[0]
    top = max_dim + 1
    lo, hi = 0.0, six(float(np.max(d)) * 0.75) if hi is None else hi
    grid = np.linspace(lo, hi, grid_points)

    # Diagrams of the full clique filtration (to H_maxDim).
    full = gudhi.RipsComplex(distance_matrix=d.tolist()).create_simplex_tree(max_dimension=top)
    full.compute_persistence(persistence_dim_max=False)
    diagrams = [intervals_of(full, k) for k in range(max_dim + 1)]

    # The top-dimensional skeleton up to the grid's end: simplex counts, Euler curve, skeleton Betti curves.
    skel = gudhi.RipsComplex(distance_matrix=d.tolist(), max_edge_length=hi).create_simplex_tree(max_dimension=top)
    counts = [[0] * grid_points for _ in range(top + 1)]
    area = 0.0
    for simplex, f in skel.get_filtration():
        k = len(simplex) - 1
        for g, t in enumerate(grid):
            if f <= t:
                counts[k][g] += 1
        if f <= hi:
            area += (-1) ** k * (hi - max(lo, f))
    euler = [sum((-1) ** k * counts[k][g] for k in range(top + 1)) for g in range(grid_points)]
    skel.compute_persistence(persistence_dim_max=True)
    skel_betti = [betti_from(intervals_of(skel, k), grid) for k in range(top + 1)]
    for g in range(grid_points):  # Euler–Poincaré on the skeleton, as a self-check of this script
        assert euler[g] == sum((-1) ** k * skel_betti[k][g] for k in range(top + 1)), (name, g)

    per_dim = []
    for k, iv in enumerate(diagrams):
        finite = iv[np.isfinite(iv[:, 1])]
        life = finite[:, 1] - finite[:, 0]
        betti = gr.BettiCurve(predefined_grid=grid)(iv if len(iv) else np.zeros((0, 2)))
        if len(finite):
            land = gr.Landscape(num_landscapes=levels, resolution=grid_points, sample_range=[lo, hi])
            land_values = land(finite).reshape(levels, grid_points)
            assert np.allclose(land.grid_, grid)
            ent = float(gr.Entropy(mode='scalar')(finite)[0])
        else:
            land_values = np.zeros((levels, grid_points))
            ent = None
        entry = {
            'dim': k,
            'diagram': [[float(b), jnum(e)] for b, e in iv],
            'betti': [int(x) for x in betti],
            'landscapes': land_values.tolist(),
            'landscape_l1': [float(np.trapz(land_values[j] / math.sqrt(2), grid)) for j in range(levels)],
            'landscape_l2': [float(math.sqrt(np.trapz((land_values[j] / math.sqrt(2)) ** 2, grid))) for j in range(levels)],
            'entropy': ent,
            'stats': {
                'count': int(len(iv)),
                'count_essential': int(np.sum(~np.isfinite(iv[:, 1]))),
                'total_p1': float(life.sum()),
                'total_p2': float((life ** 2).sum()),
                'max': float(life.max()) if len(life) else 0.0,
                'mean_birth': float(iv[:, 0].mean()) if len(iv) else None,
                'median_birth': float(np.median(iv[:, 0])) if len(iv) else None,
                'mean_death': float(finite[:, 1].mean()) if len(finite) else None,
                'median_death': float(np.median(finite[:, 1])) if len(finite) else None,
                'mean_lifetime': float(life.mean()) if len(life) else None,
                'median_lifetime': float(np.median(life)) if len(life) else None,
            },
        }
        if len(finite):
            pmax = float(life.max())
            b0, b1 = float(finite[:, 0].min()), float(finite[:, 0].max())
            sigma = pmax / 10
            img = gr.PersistenceImage(
                bandwidth=sigma, weight=lambda p, pmax=pmax: min(1.0, p[1] / pmax),
                resolution=list(image_res), im_range=[b0, b1, 0.0, pmax],
            )(finite)
            entry['image'] = {
                'spec': {'birthRange': [b0, b1], 'persistenceRange': [0.0, pmax],
                         'resolution': list(image_res), 'sigma': sigma},
                'values': [float(x) for x in img],
            }
        per_dim.append(entry)

    return {
        'name': name, 'n': n, 'maxDim': max_dim, 'lower': lower(d),
        'grid': [float(x) for x in grid], 'topDim': top,
        'simplexCounts': counts, 'euler': euler, 'eulerArea': area,
        'skeletonBetti': skel_betti, 'dims': per_dim,
    }


def correlation_distances(rng, n, t):
    x = rng.standard_normal((t, n))
    x[:, n // 2:] += 0.8 * x[:, [0]]  # one correlated block
    r = np.corrcoef(x, rowvar=False)
    d = np.vectorize(six)(1 - r)
    np.fill_diagonal(d, 0)
    return d


def main():
    os.makedirs(OUT, exist_ok=True)
    rng = np.random.default_rng(20261202)
    cases = []
    angles = rng.uniform(0, 2 * np.pi, 14)
    circle = np.c_[np.cos(angles), np.sin(angles)] + 0.08 * rng.standard_normal((14, 2))
    cases.append(case('noisy-circle', pairwise(circle), 1))
    sphere = rng.standard_normal((16, 3))
    sphere /= np.linalg.norm(sphere, axis=1)[:, None]
    cases.append(case('sphere', pairwise(sphere), 2))
    cases.append(case('gaussian-4d', pairwise(rng.standard_normal((18, 4))), 2))
    cases.append(case('correlation-1-minus-r', correlation_distances(rng, 24, 40), 1))
    # Cycle graphs with their path metric: every birth and death is an integer and lies on the grid,
    # so the half-open convention b <= t < d is tested where it matters. VR(C6) at scale 2 is the
    # octahedron (a 2-sphere): an H2 class on [2, 3).
    for m, max_dim in [(6, 2), (8, 1)]:
        idx = np.arange(m)
        gap = np.abs(idx[:, None] - idx[None, :])
        cases.append(case('cycle-graph-%d' % m, np.minimum(gap, m - gap).astype(float), max_dim,
                          grid_points=4 * (m // 2) + 1, hi=float(m // 2)))
    with open(os.path.join(OUT, 'curves.json'), 'w') as f:
        json.dump({'source': SOURCE, 'cases': cases}, f)

    ari = []
    for n, ka, kb in [(30, 3, 4), (50, 5, 5), (12, 2, 6), (40, 7, 3)]:
        a = rng.integers(0, ka, n).tolist()
        b = [x if rng.uniform() < 0.6 else int(rng.integers(0, kb)) for x in a]
        ari.append({'a': a, 'b': b, 'ari': float(adjusted_rand_score(a, b))})
    a = ['DMN', 'DMN', 'VIS', 'VIS', 'SMN', 'SMN']
    b = [0, 0, 1, 2, 2, 2]
    ari.append({'a': a, 'b': b, 'ari': float(adjusted_rand_score(a, b))})

    clusterings = []
    for rows, cols, k in [(20, 6, 3), (35, 12, 5), (15, 4, 2)]:
        m = rng.exponential(1.0, (rows, cols)) * (rng.uniform(size=(rows, cols)) < 0.5)
        m[:, 0] += 0.05  # no all-zero row (cosine is undefined there for scipy)
        z = linkage(m, method='average', metric='cosine')
        labels = fcluster(z, k, criterion='maxclust')
        clusterings.append({'rows': rows, 'cols': cols, 'k': k, 'values': m.ravel().tolist(),
                            'labels': labels.tolist(), 'heights': z[:, 2].tolist()})
    with open(os.path.join(OUT, 'partitions.json'), 'w') as f:
        json.dump({'source': SOURCE, 'ari': ari, 'clusterings': clusterings}, f)

    mats = []
    for _ in range(5):
        x = rng.standard_normal((30, 6))
        r = np.corrcoef(x, rowvar=False)
        mats.append(r.ravel().tolist())
    stack = np.array(mats).reshape(5, 6, 6)
    off = ~np.eye(6, dtype=bool)
    mean = np.eye(6)
    mean[off] = np.tanh(np.arctanh(stack[:, off]).mean(axis=0))
    samples = [rng.standard_normal(k).tolist() for k in (1, 2, 7, 40)]
    quantiles = [{'sample': s, 'q': q, 'value': float(np.percentile(s, 100 * q))}
                 for s in samples for q in (0.025, 0.5, 0.975)]
    with open(os.path.join(OUT, 'group.json'), 'w') as f:
        json.dump({'source': SOURCE, 'n': 6, 'matrices': mats, 'fisherMean': mean.ravel().tolist(),
                   'plainMean': stack.mean(axis=0).ravel().tolist(), 'quantiles': quantiles}, f)
    print('wrote', OUT)


if __name__ == '__main__':
    main()
