#!/usr/bin/python3
"""Reference values for the committed demo cohort (test/sample-data/sample-data.test.ts).

Run with Debian's Python (numpy 1.24.2, Python 3.11):

    /usr/bin/python3 test/sample-data/make_sample_reference.py

Reads sample-data/rhythm-study/ as committed (participants.tsv, nodes.tsv, sub-XX_conn.tsv) and
writes test/sample-data/goldens/rhythm-study-reference.json with, per subject:
  min_eigenvalue   smallest eigenvalue from numpy.linalg.eigvalsh (LAPACK syevd)
  max_asymmetry    max |A - A^T|
  max_diag_error   max |diag(A) - 1|
  within, between  mean off-diagonal r within one network / between different networks
  planted_target   mean r of the planted nodes with the network each one bridges to
The test recomputes these in TypeScript (its own Jacobi eigenvalue routine) and compares.
Afterwards run `npx prettier --write test/sample-data/goldens` (the repo's JSON style).
"""

import csv
import json
import os

import numpy as np

ROOT = os.path.join(os.path.dirname(os.path.abspath(__file__)), '..', '..')
STUDY = os.path.join(ROOT, 'sample-data', 'rhythm-study')
OUT = os.path.join(os.path.dirname(os.path.abspath(__file__)), 'goldens', 'rhythm-study-reference.json')

# The planted ring, as documented in sample-data/README.md.
PLANTED = [('L_AUD_2', 'somatomotor'), ('R_SMN_3', 'salience'), ('L_SAL_1', 'frontoparietal'), ('R_FPN_4', 'auditory')]


def read_tsv(path):
    with open(path, newline='') as f:
        return list(csv.DictReader(f, delimiter='\t'))


def main():
    nodes = read_tsv(os.path.join(STUDY, 'nodes.tsv'))
    people = read_tsv(os.path.join(STUDY, 'participants.tsv'))
    labels = [r['label'] for r in nodes]
    network = np.array([r['network'] for r in nodes])
    same = network[:, None] == network[None, :]
    off = ~np.eye(len(nodes), dtype=bool)
    subjects = []
    for p in people:
        a = np.loadtxt(os.path.join(STUDY, p['participant_id'] + '_conn.tsv'), delimiter='\t')
        planted = []
        for label, target in PLANTED:
            i = labels.index(label)
            cols = (network == target)
            planted.append(float(a[i, cols].mean()))
        subjects.append({
            'id': p['participant_id'],
            'group': p['group'],
            'n': int(a.shape[0]),
            'min_eigenvalue': float(np.linalg.eigvalsh(a)[0]),
            'max_asymmetry': float(np.abs(a - a.T).max()),
            'max_diag_error': float(np.abs(np.diag(a) - 1).max()),
            'within': float(a[same & off].mean()),
            'between': float(a[~same].mean()),
            'planted_target': float(np.mean(planted)),
        })
    out = {
        'tool': 'numpy %s (numpy.linalg.eigvalsh), Python 3.11, Debian /usr/bin/python3' % np.__version__,
        'study': 'sample-data/rhythm-study',
        'planted': [{'label': l, 'target': t} for l, t in PLANTED],
        'subjects': subjects,
    }
    with open(OUT, 'w') as f:
        json.dump(out, f, indent=2)
        f.write('\n')
    print('wrote', OUT)


if __name__ == '__main__':
    main()
