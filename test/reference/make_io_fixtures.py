#!/usr/bin/python3
"""Writes the reader fixtures of test/fixtures/io/ with the reference tools themselves, plus the
values each file holds as JSON, so the readers are checked against what numpy, scipy and pandas wrote.

Tools: numpy (numpy.lib.format.write_array, format versions 1.0, 2.0, 3.0), scipy.io.savemat
(level-5 MAT-files, compressed and not), pandas.DataFrame.to_csv, sklearn.covariance.LedoitWolf,
numpy.corrcoef. MATLAB itself is not installed here: the MATLAB-style text layouts (writematrix,
dlmwrite, save -ascii) are written by hand below in the formats those functions use (from memory:
writematrix writes up to 15 significant digits, save -ascii writes %.7e in 16-character fields),
and so is the header of a -v7.3 file (no HDF5 library here), which the reader only has to refuse.

Run: /usr/bin/python3 test/reference/make_io_fixtures.py   (writes into test/fixtures/io/, or $LOOPWISE_FIXTURE_OUT)
JSON encoding of values: NaN -> null, +-Infinity -> "Infinity" / "-Infinity".
"""
import json
import math
import os
import shutil
import sys

import numpy as np
import pandas as pd
import scipy
import scipy.io
import sklearn
from numpy.lib import format as npformat
from sklearn.covariance import LedoitWolf

# LOOPWISE_FIXTURE_OUT redirects the output (the live test writes a fresh set to a temporary folder).
ROOT = os.environ.get('LOOPWISE_FIXTURE_OUT') or os.path.join(os.path.dirname(os.path.abspath(__file__)), '..', 'fixtures', 'io')
rng = np.random.default_rng(20261202)
TOOLS = {
    'python': sys.version.split()[0],
    'numpy': np.__version__,
    'scipy': scipy.__version__,
    'pandas': pd.__version__,
    'sklearn': sklearn.__version__,
}


def enc(x):
    x = float(x)
    if math.isnan(x):
        return None
    if math.isinf(x):
        return 'Infinity' if x > 0 else '-Infinity'
    return x


def enc_array(a):
    a = np.asarray(a, dtype=np.float64)
    if a.ndim == 0:
        return enc(a)
    return [enc_array(x) for x in a]


def corr_matrix(n, t=None):
    t = t or 3 * n
    x = rng.standard_normal((t, n)) @ rng.standard_normal((n, n)) * 0.5 + rng.standard_normal((t, n))
    return np.corrcoef(x, rowvar=False)


def write_npy(path, arr, version):
    with open(path, 'wb') as f:
        npformat.write_array(f, arr, version=version)


def text_value(s):
    t = s.strip().strip('"').lower()
    if t in ('', 'nan', 'na', 'n/a'):
        return float('nan')
    if t in ('inf', 'infinity'):
        return float('inf')
    if t in ('-inf', '-infinity'):
        return float('-inf')
    return float(t)


def write_text(path, text):
    with open(path, 'w', newline='') as f:
        f.write(text)


def write_big_endian_mat(path, name, a):
    import struct

    def element(mi_type, payload):
        pad = (-len(payload)) % 8
        return struct.pack('>II', mi_type, len(payload)) + payload + bytes(pad)

    flags = element(6, struct.pack('>II', 6, 0))  # miUINT32: class mxDOUBLE_CLASS
    dims = element(5, struct.pack('>ii', *a.shape))  # miINT32
    nm = name.encode('ascii')
    name_el = struct.pack('>HH', len(nm), 1) + nm.ljust(4, b'\0') if len(nm) <= 4 else element(1, nm)
    real = element(9, a.astype('>f8').tobytes(order='F'))  # miDOUBLE, column-major
    body = flags + dims + name_el + real
    header = b'MATLAB 5.0 MAT-file, written by make_io_fixtures.py (big-endian)'.ljust(116, b' ')
    header += bytes(8) + struct.pack('>H', 0x0100) + b'MI'
    with open(path, 'wb') as f:
        f.write(header + struct.pack('>II', 14, len(body)) + body)


def readers():
    d = os.path.join(ROOT, 'readers')
    os.makedirs(d, exist_ok=True)
    expected = {}

    def expect(name, values, **extra):
        expected[name] = dict(values=enc_array(values), **extra)

    # ---- .npy: dtypes, byte orders, memory orders, format versions ----
    a = corr_matrix(7)
    cases = [
        ('f8_c_v1.npy', a.astype('<f8'), (1, 0)),
        ('f4_c_v2.npy', a.astype('<f4'), (2, 0)),
        ('f8_be_fortran_v3.npy', np.asfortranarray(a.astype('>f8')), (3, 0)),
        ('f4_be_v1.npy', a.astype('>f4'), (1, 0)),
        ('f2_c_v1.npy', a.astype('<f2'), (1, 0)),
        ('i4_fortran_v1.npy', np.asfortranarray(np.round(a * 1000).astype('<i4')), (1, 0)),
        ('i2_be_v2.npy', np.round(a * 100).astype('>i2'), (2, 0)),
        ('i8_c_v3.npy', np.round(a * 1e6).astype('<i8'), (3, 0)),
        ('u1_c_v1.npy', np.round((a + 1) * 100).astype('u1'), (1, 0)),
        ('rect_f8_v1.npy', rng.standard_normal((9, 4)), (1, 0)),
    ]
    for name, arr, version in cases:
        write_npy(os.path.join(d, name), arr, version)
        expect(name, arr.astype(np.float64), shape=list(arr.shape), format='npy')
    stack = np.stack([corr_matrix(5) for _ in range(3)])
    write_npy(os.path.join(d, 'stack_c_v1.npy'), stack, (1, 0))
    expect('stack_c_v1.npy', stack, shape=list(stack.shape), stack=True, format='npy')
    stack_f = np.asfortranarray(np.stack([corr_matrix(6) for _ in range(4)]).astype('>f4'))
    write_npy(os.path.join(d, 'stack_fortran_be_f4_v2.npy'), stack_f, (2, 0))
    expect('stack_fortran_be_f4_v2.npy', stack_f.astype(np.float64), shape=list(stack_f.shape), stack=True, format='npy')

    # ---- .mat: level 5 by scipy.io.savemat ----
    b = corr_matrix(6)
    scipy.io.savemat(os.path.join(d, 'double_plain.mat'), {'R': b}, format='5', do_compression=False)
    expect('double_plain.mat', b, shape=[6, 6], format='mat', variable='R')
    scipy.io.savemat(os.path.join(d, 'double_zlib.mat'), {'R': b}, format='5', do_compression=True)
    expect('double_zlib.mat', b, shape=[6, 6], format='mat', variable='R')
    scipy.io.savemat(os.path.join(d, 'single_zlib.mat'), {'Rs': b.astype(np.float32)}, format='5', do_compression=True)
    expect('single_zlib.mat', b.astype(np.float32).astype(np.float64), shape=[6, 6], format='mat', variable='Rs')
    bi = np.round(b * 1000).astype(np.int32)
    scipy.io.savemat(os.path.join(d, 'int32_plain.mat'), {'Ri': bi}, format='5')
    expect('int32_plain.mat', bi, shape=[6, 6], format='mat', variable='Ri')
    c = corr_matrix(4)
    scipy.io.savemat(
        os.path.join(d, 'several_zlib.mat'),
        {'conn': b, 'other': c, 'names': np.array(['a', 'b', 'c']), 'info': {'site': 'x', 'n': 6}},
        format='5',
        do_compression=True,
    )
    expected['several_zlib.mat'] = dict(
        format='mat',
        variables={'conn': dict(shape=[6, 6], values=enc_array(b)), 'other': dict(shape=[4, 4], values=enc_array(c))},
    )
    # A stack saved from NumPy (subjects x N x N) and one laid out the MATLAB way (N x N x subjects).
    s_np = np.stack([corr_matrix(5) for _ in range(3)])
    scipy.io.savemat(os.path.join(d, 'stack_numpy_layout.mat'), {'S': s_np}, format='5', do_compression=True)
    expect('stack_numpy_layout.mat', s_np, shape=list(s_np.shape), stack=True, format='mat', variable='S')
    s_ml = np.stack([corr_matrix(5) for _ in range(4)], axis=2)
    scipy.io.savemat(os.path.join(d, 'stack_matlab_layout.mat'), {'S': s_ml}, format='5', do_compression=False)
    expect('stack_matlab_layout.mat', np.moveaxis(s_ml, 2, 0), shape=[4, 5, 5], stack=True, format='mat', variable='S')

    # A big-endian level-5 file ('MI'): scipy.io.savemat writes native order only, so the bytes are
    # laid out by hand here and the expected values are what scipy.io.loadmat reads back from them.
    big = rng.standard_normal((3, 4))
    write_big_endian_mat(os.path.join(d, 'double_big_endian.mat'), 'B', big)
    back = scipy.io.loadmat(os.path.join(d, 'double_big_endian.mat'))['B']
    assert np.array_equal(back, big)
    expect('double_big_endian.mat', back, shape=[3, 4], format='mat', variable='B')

    # ---- delimited text: pandas ----
    e = corr_matrix(6)
    labels = ['L_V1', 'R_V1', 'L_M1', 'R_M1', 'L_PFC', 'R_PFC']
    df = pd.DataFrame(e, index=labels, columns=labels)
    df.to_csv(os.path.join(d, 'pandas_index_header.csv'))
    expect('pandas_index_header.csv', e, shape=[6, 6], rowLabels=labels, colLabels=labels)
    df.to_csv(os.path.join(d, 'pandas_header.tsv'), sep='\t', index=False)
    expect('pandas_header.tsv', e, shape=[6, 6], colLabels=labels)
    en = e.copy()
    en[1, 3] = en[3, 1] = np.nan
    en[4, :] = np.nan
    en[:, 4] = np.nan
    pd.DataFrame(en, index=labels, columns=labels).to_csv(os.path.join(d, 'pandas_nan_empty.csv'))
    expect('pandas_nan_empty.csv', en, shape=[6, 6], rowLabels=labels, colLabels=labels)
    pd.DataFrame(en).to_csv(os.path.join(d, 'pandas_nan_na.tsv'), sep='\t', index=False, header=False, na_rep='n/a')
    expect('pandas_nan_na.tsv', en, shape=[6, 6])

    # ---- delimited text: MATLAB-style layouts, written by hand ----
    f = corr_matrix(8)

    def hand(name, rows, **extra):
        text = ''.join(rows)
        write_text(os.path.join(d, name), text)
        lines = [l for l in text.replace('\r\n', '\n').split('\n') if l.strip()]
        return lines

    # writematrix(R, 'f.csv'): comma, no header, 15 significant digits.
    lines = hand('matlab_writematrix.csv', [','.join('%.15g' % v for v in row) + '\n' for row in f])
    expect('matlab_writematrix.csv', [[text_value(s) for s in l.split(',')] for l in lines], shape=[8, 8])
    # dlmwrite('f.txt', R, 'delimiter', '\t', 'precision', '%.6f')
    lines = hand('matlab_dlmwrite_tab.txt', ['\t'.join('%.6f' % v for v in row) + '\n' for row in f])
    expect('matlab_dlmwrite_tab.txt', [[text_value(s) for s in l.split('\t')] for l in lines], shape=[8, 8])
    # save('f.txt', 'R', '-ascii'): space-aligned %.7e fields.
    fa = f.copy()
    fa[2, 5] = fa[5, 2] = np.nan
    fa[0, 0] = np.inf
    lines = hand('matlab_save_ascii.txt', [''.join('%16.7e' % v for v in row).replace('inf', 'Inf').replace('nan', 'NaN') + '\n' for row in fa])
    expect('matlab_save_ascii.txt', [[text_value(s) for s in l.split()] for l in lines], shape=[8, 8])
    # Semicolon-separated with header, label column, NaN and n/a cells (decimal points).
    g = corr_matrix(4)
    names = ['a', 'b', 'c', 'd']
    rows = ['region;' + ';'.join(names) + '\n']
    for i, row in enumerate(g):
        cells = ['%.17g' % v for v in row]
        if i == 1:
            cells[2] = 'NaN'
        if i == 2:
            cells[1] = 'n/a'
        rows.append(names[i] + ';' + ';'.join(cells) + '\n')
    lines = hand('semicolon_labels.csv', rows)
    expect('semicolon_labels.csv', [[text_value(s) for s in l.split(';')[1:]] for l in lines[1:]], shape=[4, 4], rowLabels=names, colLabels=names)
    # R's write.table(x, sep=','): quoted names, a header without the corner cell.
    rows = [','.join('"%s"' % n for n in names) + '\n'] + [
        '"%s",' % names[i] + ','.join('%.15g' % v for v in row) + '\n' for i, row in enumerate(g)
    ]
    lines = hand('r_write_table.csv', rows)
    expect('r_write_table.csv', [[text_value(s) for s in l.split(',')[1:]] for l in lines[1:]], shape=[4, 4], rowLabels=names, colLabels=names)
    # Region numbers as header and first column (1..N), CRLF line ends and a UTF-8 byte order mark.
    rows = ['\ufeff' + ','.join(str(k + 1) for k in range(4)) + '\r\n'] + [
        str(i + 1) + ',' + ','.join('%.15g' % v for v in row) + '\r\n' for i, row in enumerate(g)
    ]
    lines = hand('index_header_crlf_bom.csv', rows)
    expect('index_header_crlf_bom.csv', [[text_value(s) for s in l.split(',')[1:]] for l in lines[1:]], shape=[4, 4], rowLabels=['1', '2', '3', '4'], colLabels=['1', '2', '3', '4'])
    # A separator at the end of every line; missing values written as nan and NA.
    rows = []
    for i, row in enumerate(g):
        cells = ['%.15g' % v for v in row]
        if i == 3:
            cells[0] = 'nan'
            cells[1] = 'NA'
        rows.append('\t'.join(cells) + '\t\n')
    lines = hand('trailing_tab.tsv', rows)
    expect('trailing_tab.tsv', [[text_value(s) for s in l.split('\t')[:-1]] for l in lines], shape=[4, 4])
    # Single spaces (dlmwrite with ' ' delimiter), a one-line comment on top.
    rows = ['# exported correlation matrix\n'] + [' '.join('%.10g' % v for v in row) + '\n' for row in g]
    lines = hand('space_comment.txt', rows)
    expect('space_comment.txt', [[text_value(s) for s in l.split()] for l in lines[1:]], shape=[4, 4])

    with open(os.path.join(d, 'expected.json'), 'w') as fh:
        json.dump({'tools': TOOLS, 'files': expected}, fh, indent=1)


def timeseries():
    d = os.path.join(ROOT, 'timeseries')
    os.makedirs(d, exist_ok=True)
    out = {}
    series = {
        'ts_long.csv': rng.standard_normal((60, 8)) @ rng.standard_normal((8, 8)) + 3.0,
        'ts_short.npy': rng.standard_normal((12, 15)) @ rng.standard_normal((15, 15)),
        'ts_scaled.tsv': rng.standard_normal((30, 10)) * np.linspace(0.01, 100, 10),
    }
    for name, x in series.items():
        path = os.path.join(d, name)
        if name.endswith('.npy'):
            write_npy(path, x, (1, 0))
        else:
            pd.DataFrame(x, columns=['roi%d' % k for k in range(x.shape[1])]).to_csv(path, sep='\t' if name.endswith('.tsv') else ',', index=False)
        pearson = np.corrcoef(x, rowvar=False)
        # Ledoit-Wolf on z-scored series (population sd), then scaled to unit diagonal.
        z = (x - x.mean(axis=0)) / x.std(axis=0)
        lw = LedoitWolf().fit(z)
        cov = lw.covariance_
        sd = np.sqrt(np.diag(cov))
        out[name] = dict(
            shape=list(x.shape),
            pearson=enc_array(pearson),
            ledoitWolf=enc_array(cov / np.outer(sd, sd)),
            shrinkage=float(lw.shrinkage_),
        )
    # Fisher-z group mean of several correlation matrices: tanh(mean(arctanh(r))), diagonal 1.
    mats = [corr_matrix(6) for _ in range(5)]
    with np.errstate(divide='ignore'):
        zs = np.arctanh(np.clip(np.stack(mats), -1, 1))
    m = np.tanh(zs.mean(axis=0))
    np.fill_diagonal(m, 1.0)
    out['fisher'] = dict(inputs=[enc_array(x) for x in mats], mean=enc_array(m))
    with open(os.path.join(d, 'expected.json'), 'w') as fh:
        json.dump({'tools': TOOLS, 'series': out}, fh, indent=1)


def participants(path, rows, sep='\t'):
    with open(path, 'w', newline='') as fh:
        for r in rows:
            fh.write(sep.join(r) + '\n')


def save_tsv(path, m, header=None):
    pd.DataFrame(m, columns=header).to_csv(path, sep='\t', index=False, header=header is not None)


def cohorts():
    n = 6
    labels = ['L_V1', 'R_V1', 'L_M1', 'R_M1', 'L_PFC', 'R_PFC']
    # ---- a BIDS-like cohort with mixed formats and sub-1 / sub-10 style ids ----
    d = os.path.join(ROOT, 'cohort-bids')
    os.makedirs(d, exist_ok=True)
    participants(
        os.path.join(d, 'participants.tsv'),
        [
            ['participant_id', 'age', 'group', 'site', 'score'],
            ['sub-1', '23', 'control', 'A', '1.5'],
            ['sub-2', '31', 'patient', 'B', 'n/a'],
            ['sub-10', 'n/a', 'patient', 'A', '2.25'],
            ['sub-11', '45', 'control', '3', '0'],
        ],
    )
    participants(
        os.path.join(d, 'nodes.tsv'),
        [['label', 'network', 'x', 'y', 'z']]
        + [[l, 'visual' if 'V1' in l else 'motor' if 'M1' in l else 'frontal', str(-30 + 12 * k), str(5 * k), 'n/a' if k == 5 else str(k)] for k, l in enumerate(labels)],
    )
    mats = {}
    for sid, ext in [('sub-1', 'tsv'), ('sub-2', 'npy'), ('sub-10', 'csv'), ('sub-11', 'mat')]:
        m = corr_matrix(n)
        mats[sid] = m
        folder = os.path.join(d, sid, 'func')
        os.makedirs(folder, exist_ok=True)
        path = os.path.join(folder, '%s_task-rest_connectome.%s' % (sid, ext))
        if ext == 'tsv':
            save_tsv(path, m, labels)
        elif ext == 'csv':
            pd.DataFrame(m).to_csv(path, index=False, header=False)
        elif ext == 'npy':
            write_npy(path, m, (1, 0))
        else:
            scipy.io.savemat(path, {'conn': m}, do_compression=True)
    with open(os.path.join(d, 'expected.json'), 'w') as fh:
        json.dump({'tools': TOOLS, 'matrices': {k: enc_array(v) for k, v in mats.items()}}, fh, indent=1)

    # ---- one stack file and a participants table in the same order ----
    d = os.path.join(ROOT, 'cohort-stack')
    os.makedirs(d, exist_ok=True)
    stack = np.stack([corr_matrix(5) for _ in range(4)])
    write_npy(os.path.join(d, 'all_subjects.npy'), stack, (1, 0))
    participants(os.path.join(d, 'participants.csv'), [['participant_id', 'group'], ['sub-a', 'x'], ['sub-b', 'y'], ['sub-c', 'x'], ['sub-d', 'y']], sep=',')
    with open(os.path.join(d, 'expected.json'), 'w') as fh:
        json.dump({'tools': TOOLS, 'stack': enc_array(stack)}, fh, indent=1)

    # ---- time series per subject, the file named in a column of the table ----
    d = os.path.join(ROOT, 'cohort-timeseries')
    os.makedirs(os.path.join(d, 'signals'), exist_ok=True)
    rows = [['participant_id', 'matrix_file', 'age']]
    exp = {}
    for k in range(3):
        x = rng.standard_normal((25, 5))
        name = 'signals/run%d.csv' % (k + 1)
        pd.DataFrame(x).to_csv(os.path.join(d, name), index=False, header=False)
        rows.append(['sub-%02d' % (k + 1), name, str(20 + k)])
        exp['sub-%02d' % (k + 1)] = enc_array(np.corrcoef(x, rowvar=False))
    participants(os.path.join(d, 'participants.tsv'), rows)
    with open(os.path.join(d, 'expected.json'), 'w') as fh:
        json.dump({'tools': TOOLS, 'pearson': exp}, fh, indent=1)


def malformed():
    """One cohort where most subjects are broken in one specific way; sub-01..sub-03 are good."""
    d = os.path.join(ROOT, 'malformed')
    if os.path.isdir(d):
        shutil.rmtree(d)
    os.makedirs(d)
    n = 5
    good = corr_matrix(n)
    cases = {}  # subject -> expected finding code

    def p(name):
        return os.path.join(d, name)

    def csv(name, m):
        pd.DataFrame(m).to_csv(p(name), index=False, header=False)

    csv('sub-01_conn.csv', good)
    write_npy(p('sub-02_conn.npy'), corr_matrix(n), (2, 0))
    scipy.io.savemat(p('sub-03_conn.mat'), {'R': corr_matrix(n)}, do_compression=True)
    csv('sub-04_conn.csv', corr_matrix(n)[:, :4]); cases['sub-04'] = 'not-square'
    csv('sub-05_conn.csv', corr_matrix(n + 1)); cases['sub-05'] = 'n-mismatch'
    m = corr_matrix(n); m[3, 1] += 0.2; csv('sub-06_conn.csv', m); cases['sub-06'] = 'asymmetric'
    m = corr_matrix(n); np.fill_diagonal(m, 0); csv('sub-07_conn.csv', m); cases['sub-07'] = 'diagonal-not-one'
    m = corr_matrix(n); m[0, 2] = m[2, 0] = 1.7; csv('sub-08_conn.csv', m); cases['sub-08'] = 'out-of-range'
    with np.errstate(divide='ignore'):
        m = np.arctanh(corr_matrix(n))
    m = m * 2.5
    np.fill_diagonal(m, np.inf)
    csv('sub-09_conn.csv', m); cases['sub-09'] = 'fisher-z'
    m = corr_matrix(n); m[1, 3] = m[3, 1] = np.nan; csv('sub-10_conn.csv', m); cases['sub-10'] = 'nan-cells'
    m = corr_matrix(n); m[2, :] = np.nan; m[:, 2] = np.nan; csv('sub-11_conn.csv', m); cases['sub-11'] = 'nan-row'
    m = corr_matrix(n); m[4, :4] = 0; m[:4, 4] = 0; csv('sub-12_conn.csv', m); cases['sub-12'] = 'constant-row'
    open(p('sub-13_conn.csv'), 'w').close(); cases['sub-13'] = 'empty-file'
    buf = open(p('sub-02_conn.npy'), 'rb').read()
    open(p('sub-14_conn.npy'), 'wb').write(buf[: len(buf) - 37]); cases['sub-14'] = 'truncated'
    scipy.io.savemat(p('sub-15_conn.mat'), {'R': good, 'R_raw': good}, do_compression=False); cases['sub-15'] = 'mat-variable-ambiguous'
    # A -v7.3 MAT-file: a 512-byte MATLAB text header, then an HDF5 superblock signature.
    hdr = b'MATLAB 7.3 MAT-file, Platform: GLNXA64, Created on: Wed Dec  2 02:00:00 2026 HDF5 schema 1.00 .'
    open(p('sub-16_conn.mat'), 'wb').write(hdr.ljust(512, b' ') + b'\x89HDF\r\n\x1a\n' + bytes(64)); cases['sub-16'] = 'mat-v73'
    rows = [','.join('%.6f' % v for v in r) for r in good]
    rows[2] = rows[2].replace(rows[2].split(',')[3], 'abc', 1)
    write_text(p('sub-17_conn.csv'), '\n'.join(rows) + '\n'); cases['sub-17'] = 'not-a-number'
    rows = [','.join('%.6f' % v for v in r) for r in good]
    rows[3] = rows[3] + ',0.5'
    write_text(p('sub-18_conn.csv'), '\n'.join(rows) + '\n'); cases['sub-18'] = 'ragged'
    m = corr_matrix(n); m[0, 4] = m[4, 0] = np.inf; csv('sub-19_conn.csv', m); cases['sub-19'] = 'inf-cells'
    csv('sub-20_conn.csv', corr_matrix(n)); cases['sub-20'] = 'duplicate-id'
    cases['sub-21'] = 'no-matrix'
    open(p('sub-23_conn.npy'), 'wb').write(b'PK\x03\x04 this is a zip, not npy' + bytes(40)); cases['sub-23'] = 'bad-format'
    write_npy(p('sub-24_conn.npy'), corr_matrix(n).astype(np.complex128), (1, 0)); cases['sub-24'] = 'unsupported-dtype'
    scipy.io.savemat(p('sub-25_conn.mat'), {'info': {'site': 'A', 'tr': 2.0}}); cases['sub-25'] = 'mat-variable-type'
    scipy.io.savemat(p('sub-26_conn.mat'), {'R': corr_matrix(n)}, do_compression=True)
    buf = open(p('sub-26_conn.mat'), 'rb').read()
    open(p('sub-26_conn.mat'), 'wb').write(buf[: len(buf) - 60]); cases['sub-26'] = 'truncated'
    write_npy(p('sub-27_conn.npy'), np.arange(5.0), (1, 0)); cases['sub-27'] = 'bad-shape'
    open(p('sub-28_conn.csv'), 'wb').write(bytes(range(256)) * 4); cases['sub-28'] = 'bad-format'
    csv('sub-29_conn.csv', np.full((n, n), np.nan)); cases['sub-29'] = 'all-nan'
    write_text(p('sub-30_conn.tsv'), 'a\tb\tc\td\te\n'); cases['sub-30'] = 'empty-file'
    csv('sub-31_conn.csv', corr_matrix(n)); csv('sub-31_conn_copy.csv', corr_matrix(n)); cases['sub-31'] = 'several-matrices'
    rows = [';'.join(('%.4f' % v).replace('.', ',') for v in r) for r in good]
    write_text(p('sub-32_conn.csv'), '\n'.join(rows) + '\n'); cases['sub-32'] = 'not-a-number'
    write_text(p('sub-33_conn.csv'), '1\n'); cases['sub-33'] = 'n-mismatch'
    csv('sub-99_conn.csv', corr_matrix(n))  # a matrix without a participant
    cases['sub-99'] = 'no-participant'
    ids = ['sub-%02d' % k for k in range(1, 34) if k != 22] + ['sub-20', '']
    rows = [['participant_id', 'group', 'age']] + [[i, 'a' if k % 2 else 'b', str(20 + k)] for k, i in enumerate(ids)]
    participants(p('participants.tsv'), rows)
    cases[''] = 'empty-id'
    with open(os.path.join(ROOT, 'malformed-expected.json'), 'w') as fh:
        json.dump({'tools': TOOLS, 'good': ['sub-01', 'sub-02', 'sub-03', 'sub-07', 'sub-12'], 'cases': cases}, fh, indent=1)


if __name__ == '__main__':
    readers()
    timeseries()
    cohorts()
    malformed()
    print('wrote fixtures under', os.path.normpath(ROOT))
