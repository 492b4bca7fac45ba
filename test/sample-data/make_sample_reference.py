#!/usr/bin/python3
"""Reference values for the committed demo cohort (test/sample-data/sample-data.test.ts).

Run with Debian's Python (numpy 1.24.2, Python 3.11):

    /usr/bin/python3 test/sample-data/make_sample_reference.py

Reads sample-data/rhythm-study/ as committed (participants.tsv, nodes.tsv, and per participant
sub-XX/sub-XX_sessions.tsv and the matrices sub-XX/ses-YY/func/sub-XX_ses-YY_task-rest_desc-corr_relmat.tsv)
and writes test/sample-data/goldens/rhythm-study-reference.json with, per scan (participant and session):
  min_eigenvalue   smallest eigenvalue from numpy.linalg.eigvalsh (LAPACK syevd)
  max_asymmetry    max |A - A^T|
  max_diag_error   max |diag(A) - 1|
  within, between  mean off-diagonal r within one network / between different networks
  planted_target   mean r of the planted nodes with the network each one bridges to
  fd_mean          the scan's row of the participant's sessions table
and, from statsmodels MixedLM (REML; random intercept per participant), for the design
value ~ group * session + (1 | participant):
  mixed.planted_target   interaction coefficient (training × post), its p-value, the group
                         coefficient at pre and its p-value
  mixed.within           the random-intercept variance and the residual variance (their ratio
                         is the intraclass correlation: scans of one participant correlate)
The test recomputes these in TypeScript (its own Jacobi eigenvalue routine) and compares.
Afterwards run `npx prettier --write test/sample-data/goldens` (the repo's JSON style).
"""

import csv
import json
import os

import numpy as np
import pandas as pd
import statsmodels
import statsmodels.formula.api as smf

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
        sid = p['participant_id']
        sessions = read_tsv(os.path.join(STUDY, sid, sid + '_sessions.tsv'))
        for row in sessions:
            ses = row['session_id']
            path = os.path.join(STUDY, sid, ses, 'func', '%s_%s_task-rest_desc-corr_relmat.tsv' % (sid, ses))
            a = np.loadtxt(path, delimiter='\t')
            planted = []
            for label, target in PLANTED:
                i = labels.index(label)
                cols = (network == target)
                planted.append(float(a[i, cols].mean()))
            subjects.append({
                'id': sid,
                'session': ses[len('ses-'):],
                'group': p['group'],
                'fd_mean': float(row['fd_mean']),
                'n': int(a.shape[0]),
                'min_eigenvalue': float(np.linalg.eigvalsh(a)[0]),
                'max_asymmetry': float(np.abs(a - a.T).max()),
                'max_diag_error': float(np.abs(np.diag(a) - 1).max()),
                'within': float(a[same & off].mean()),
                'between': float(a[~same].mean()),
                'planted_target': float(np.mean(planted)),
            })
    frame = pd.DataFrame(subjects)
    frame['post'] = (frame['session'] == 'post').astype(float)
    frame['training'] = (frame['group'] == 'training').astype(float)
    mixed = {}
    for value in ['planted_target', 'within']:
        fit = smf.mixedlm(value + ' ~ training * post', frame, groups=frame['id']).fit(reml=True)
        mixed[value] = {
            'interaction': float(fit.params['training:post']),
            'interaction_p': float(fit.pvalues['training:post']),
            'group_at_pre': float(fit.params['training']),
            'group_at_pre_p': float(fit.pvalues['training']),
            'participant_variance': float(fit.cov_re.iloc[0, 0]),
            'residual_variance': float(fit.scale),
        }
    out = {
        'tool': 'numpy %s (numpy.linalg.eigvalsh), statsmodels %s (MixedLM, REML), Python 3.11, Debian /usr/bin/python3'
        % (np.__version__, statsmodels.__version__),
        'mixed': mixed,
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
