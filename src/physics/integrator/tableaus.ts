/**
 * Coefficient data of the embedded explicit Runge–Kutta pairs. The methods differ only in this
 * data; one generic step function (rungeKutta.ts) and one interpolant form (denseOutput.ts) drive
 * all of them.
 *
 * Stage layout, shared by every tableau (n = stages):
 *   stages 0 … n−1       the step's own stages;
 *   stage  n             f(t + h, y_new), the FSAL stage (a-row n equals b, c[n] = 1); it is
 *                        reused as stage 0 of the next step;
 *   stages n+1 … total−1 extra stages needed only by the dense output, computed on demand.
 *
 * Dense output (Hairer's form, shared by DOPRI5 and DOP853), with x = (t − t_old)/h, Δ = y_new − y_old:
 *   y(x) = y_old + x(F0 + (1−x)(F1 + x(F2 + (1−x)(F3 + x(F4 + …)))))
 *   F0 = Δ,  F1 = h·f_old − Δ,  F2 = 2Δ − h(f_old + f_new),  F(3+r) = h·Σ_j d[r][j]·k_j.
 */

export interface RungeKuttaTableau {
  readonly name: string;
  /** Order of the propagated solution (local extrapolation). */
  readonly order: number;
  /** Order of the embedded error estimate; the step-control exponent is −1/(errorOrder + 1). */
  readonly errorOrder: number;
  /** Order of the dense-output interpolant. */
  readonly denseOrder: number;
  /** Stages per step, FSAL stage excluded. */
  readonly stages: number;
  /** Extra stages evaluated only when the dense output is needed. */
  readonly extraStages: number;
  /** stages + 1 + extraStages: the row stride of `a` and the length of `c`. */
  readonly totalStages: number;
  /** Strictly lower triangular, totalStages × totalStages, row-major. Row `stages` equals b. */
  readonly a: Float64Array;
  /** Weights of the propagated solution, length `stages`. */
  readonly b: Float64Array;
  /** Nodes, length totalStages. */
  readonly c: Float64Array;
  /** Error weights b − b̂ over stages 0 … stages (FSAL stage last), length stages + 1. */
  readonly e: Float64Array;
  /**
   * Second, lower-order error weights (DOP853's third-order estimate), length stages + 1, or
   * length 0 when the method has a single estimate. When present, the error norm is Hairer's
   * combination |h|·‖e‖² / sqrt(‖e‖² + 0.01·‖e3‖²).
   */
  readonly e3: Float64Array;
  /** Rows of the dense-output matrix d (F3 onwards). */
  readonly denseRows: number;
  /** Dense-output coefficients, denseRows × totalStages, row-major. */
  readonly d: Float64Array;
  // The same matrices with their zeros dropped, for the hot loops (derived from the above).
  readonly aSparse: SparseRows;
  readonly bSparse: SparseRows;
  readonly eSparse: SparseRows;
  readonly e3Sparse: SparseRows;
  readonly dSparse: SparseRows;
}

/** Row-compressed matrix: row r holds entries start[r] … start[r+1]−1 of (col, value). */
export interface SparseRows {
  readonly start: Int32Array;
  readonly col: Int32Array;
  readonly value: Float64Array;
}

export function compressRows(dense: Float64Array, rows: number, cols: number): SparseRows {
  const start = new Int32Array(rows + 1);
  const col: number[] = [];
  const value: number[] = [];
  for (let r = 0; r < rows; r++) {
    for (let c = 0; c < cols; c++) {
      const v = dense[r * cols + c];
      if (v !== 0) {
        col.push(c);
        value.push(v);
      }
    }
    start[r + 1] = col.length;
  }
  return { start, col: Int32Array.from(col), value: Float64Array.from(value) };
}

type TableauData = Omit<RungeKuttaTableau, 'aSparse' | 'bSparse' | 'eSparse' | 'e3Sparse' | 'dSparse'>;

function defineTableau(data: TableauData): RungeKuttaTableau {
  const total = data.totalStages;
  return {
    ...data,
    aSparse: compressRows(data.a, total, total),
    bSparse: compressRows(data.b, 1, data.stages),
    eSparse: compressRows(data.e, 1, data.stages + 1),
    e3Sparse: compressRows(data.e3, data.e3.length > 0 ? 1 : 0, data.stages + 1),
    dSparse: compressRows(data.d, data.denseRows, total),
  };
}

/* eslint-disable no-loss-of-precision -- the published coefficients are kept digit for digit so
   they can be checked against their sources; each literal rounds to the nearest double. */

type Entry = readonly [row: number, col: number, value: number];

function matrix(rows: number, cols: number, entries: readonly Entry[]): Float64Array {
  const m = new Float64Array(rows * cols);
  for (const [r, c, v] of entries) m[r * cols + c] = v;
  return m;
}

function vector(length: number, entries: readonly (readonly [index: number, value: number])[]): Float64Array {
  const v = new Float64Array(length);
  for (const [i, x] of entries) v[i] = x;
  return v;
}

function rowsToEntries(rows: readonly (readonly number[])[]): Entry[] {
  const out: Entry[] = [];
  rows.forEach((row, r) => row.forEach((v, c) => out.push([r, c, v])));
  return out;
}

/**
 * Dormand–Prince 5(4), 7 stages with FSAL (Dormand & Prince, J. Comput. Appl. Math. 6 (1980)
 * 19–26). Dense output of order 4: Hairer's `contd5` coefficients (Hairer, Nørsett & Wanner,
 * Solving ODEs I, 2nd ed., Sec. II.6; the same numbers form the last column of Shampine's
 * interpolation matrix, Math. Comp. 46 (1986) 135–150).
 */
export const DOPRI5: RungeKuttaTableau = (() => {
  const stages = 6;
  const total = 7;
  const b = [35 / 384, 0, 500 / 1113, 125 / 192, -2187 / 6784, 11 / 84];
  const aRows: number[][] = [
    [],
    [1 / 5],
    [3 / 40, 9 / 40],
    [44 / 45, -56 / 15, 32 / 9],
    [19372 / 6561, -25360 / 2187, 64448 / 6561, -212 / 729],
    [9017 / 3168, -355 / 33, 46732 / 5247, 49 / 176, -5103 / 18656],
    b,
  ];
  // b̂ (4th order) = [5179/57600, 0, 7571/16695, 393/640, −92097/339200, 187/2100, 1/40]; e = b − b̂.
  const e = [71 / 57600, 0, -71 / 16695, 71 / 1920, -17253 / 339200, 22 / 525, -1 / 40];
  const d = [
    -12715105075 / 11282082432,
    0,
    87487479700 / 32700410799,
    -10690763975 / 1880347072,
    701980252875 / 199316789632,
    -1453857185 / 822651844,
    69997945 / 29380423,
  ];
  return defineTableau({
    name: 'DOPRI5',
    order: 5,
    errorOrder: 4,
    denseOrder: 4,
    stages,
    extraStages: 0,
    totalStages: total,
    a: matrix(total, total, rowsToEntries(aRows)),
    b: Float64Array.from(b),
    c: Float64Array.from([0, 1 / 5, 3 / 10, 4 / 5, 8 / 9, 1, 1]),
    e: Float64Array.from(e),
    e3: new Float64Array(0),
    denseRows: 1,
    d: Float64Array.from(d),
  });
})();

/**
 * Dormand–Prince 8(5,3), 12 stages + FSAL, with 3 extra stages for a 7th-order dense output.
 * Coefficients of Hairer's DOP853 (Hairer, Nørsett & Wanner, Solving ODEs I, 2nd ed., Sec. II.10;
 * the Fortran dop853.f), as transcribed in SciPy's `scipy/integrate/_ivp/dop853_coefficients.py`.
 */
export const DOP853: RungeKuttaTableau = (() => {
  const stages = 12;
  const total = 16;
  const c = Float64Array.from([
    0.0,
    0.526001519587677318785587544488e-1,
    0.789002279381515978178381316732e-1,
    0.11835034190722739672675719751,
    0.28164965809277260327324280249,
    0.333333333333333333333333333333,
    0.25,
    0.307692307692307692307692307692,
    0.651282051282051282051282051282,
    0.6,
    0.857142857142857142857142857142,
    1.0,
    1.0,
    0.1,
    0.2,
    0.777777777777777777777777777778,
  ]);
  const a = matrix(total, total, [
    [1, 0, 5.26001519587677318785587544488e-2],

    [2, 0, 1.97250569845378994544595329183e-2],
    [2, 1, 5.91751709536136983633785987549e-2],

    [3, 0, 2.95875854768068491816892993775e-2],
    [3, 2, 8.87627564304205475450678981324e-2],

    [4, 0, 2.41365134159266685502369798665e-1],
    [4, 2, -8.84549479328286085344864962717e-1],
    [4, 3, 9.24834003261792003115737966543e-1],

    [5, 0, 3.7037037037037037037037037037e-2],
    [5, 3, 1.70828608729473871279604482173e-1],
    [5, 4, 1.25467687566822425016691814123e-1],

    [6, 0, 3.7109375e-2],
    [6, 3, 1.70252211019544039314978060272e-1],
    [6, 4, 6.02165389804559606850219397283e-2],
    [6, 5, -1.7578125e-2],

    [7, 0, 3.70920001185047927108779319836e-2],
    [7, 3, 1.70383925712239993810214054705e-1],
    [7, 4, 1.07262030446373284651809199168e-1],
    [7, 5, -1.53194377486244017527936158236e-2],
    [7, 6, 8.27378916381402288758473766002e-3],

    [8, 0, 6.24110958716075717114429577812e-1],
    [8, 3, -3.36089262944694129406857109825],
    [8, 4, -8.68219346841726006818189891453e-1],
    [8, 5, 2.75920996994467083049415600797e1],
    [8, 6, 2.01540675504778934086186788979e1],
    [8, 7, -4.34898841810699588477366255144e1],

    [9, 0, 4.77662536438264365890433908527e-1],
    [9, 3, -2.48811461997166764192642586468],
    [9, 4, -5.90290826836842996371446475743e-1],
    [9, 5, 2.12300514481811942347288949897e1],
    [9, 6, 1.52792336328824235832596922938e1],
    [9, 7, -3.32882109689848629194453265587e1],
    [9, 8, -2.03312017085086261358222928593e-2],

    [10, 0, -9.3714243008598732571704021658e-1],
    [10, 3, 5.18637242884406370830023853209],
    [10, 4, 1.09143734899672957818500254654],
    [10, 5, -8.14978701074692612513997267357],
    [10, 6, -1.85200656599969598641566180701e1],
    [10, 7, 2.27394870993505042818970056734e1],
    [10, 8, 2.49360555267965238987089396762],
    [10, 9, -3.0467644718982195003823669022],

    [11, 0, 2.27331014751653820792359768449],
    [11, 3, -1.05344954667372501984066689879e1],
    [11, 4, -2.00087205822486249909675718444],
    [11, 5, -1.79589318631187989172765950534e1],
    [11, 6, 2.79488845294199600508499808837e1],
    [11, 7, -2.85899827713502369474065508674],
    [11, 8, -8.87285693353062954433549289258],
    [11, 9, 1.23605671757943030647266201528e1],
    [11, 10, 6.43392746015763530355970484046e-1],

    // Row 12 is b (FSAL stage).
    [12, 0, 5.42937341165687622380535766363e-2],
    [12, 5, 4.45031289275240888144113950566],
    [12, 6, 1.89151789931450038304281599044],
    [12, 7, -5.8012039600105847814672114227],
    [12, 8, 3.1116436695781989440891606237e-1],
    [12, 9, -1.52160949662516078556178806805e-1],
    [12, 10, 2.01365400804030348374776537501e-1],
    [12, 11, 4.47106157277725905176885569043e-2],

    // Rows 13–15: extra stages of the dense output.
    [13, 0, 5.61675022830479523392909219681e-2],
    [13, 6, 2.53500210216624811088794765333e-1],
    [13, 7, -2.46239037470802489917441475441e-1],
    [13, 8, -1.24191423263816360469010140626e-1],
    [13, 9, 1.5329179827876569731206322685e-1],
    [13, 10, 8.20105229563468988491666602057e-3],
    [13, 11, 7.56789766054569976138603589584e-3],
    [13, 12, -8.298e-3],

    [14, 0, 3.18346481635021405060768473261e-2],
    [14, 5, 2.83009096723667755288322961402e-2],
    [14, 6, 5.35419883074385676223797384372e-2],
    [14, 7, -5.49237485713909884646569340306e-2],
    [14, 10, -1.08347328697249322858509316994e-4],
    [14, 11, 3.82571090835658412954920192323e-4],
    [14, 12, -3.40465008687404560802977114492e-4],
    [14, 13, 1.41312443674632500278074618366e-1],

    [15, 0, -4.28896301583791923408573538692e-1],
    [15, 5, -4.69762141536116384314449447206],
    [15, 6, 7.68342119606259904184240953878],
    [15, 7, 4.06898981839711007970213554331],
    [15, 8, 3.56727187455281109270669543021e-1],
    [15, 12, -1.39902416515901462129418009734e-3],
    [15, 13, 2.9475147891527723389556272149],
    [15, 14, -9.15095847217987001081870187138],
  ]);
  const b = a.slice(stages * total, stages * total + stages);
  // Third-order estimate: e3 = b − b̂3 with b̂3 nonzero only at stages 0, 8, 11 (Hairer's bhh1–3).
  const e3 = new Float64Array(stages + 1);
  e3.set(b);
  e3[0] -= 0.244094488188976377952755905512;
  e3[8] -= 0.733846688281611857341361741547;
  e3[11] -= 0.220588235294117647058823529412e-1;
  // Fifth-order estimate (Hairer's er1…er12).
  const e = vector(stages + 1, [
    [0, 0.1312004499419488073250102996e-1],
    [5, -0.1225156446376204440720569753e1],
    [6, -0.4957589496572501915214079952],
    [7, 0.1664377182454986536961530415e1],
    [8, -0.350328848749973681688648729],
    [9, 0.3341791187130174790297318841],
    [10, 0.8192320648511571246570742613e-1],
    [11, -0.2235530786388629525884427845e-1],
  ]);
  const d = matrix(4, total, [
    [0, 0, -0.84289382761090128651353491142e1],
    [0, 5, 0.5667149535193777696253178359],
    [0, 6, -0.30689499459498916912797304727e1],
    [0, 7, 0.2384667656512069828772814968e1],
    [0, 8, 0.21170345824450282767155149946e1],
    [0, 9, -0.8713915837779729920678990749],
    [0, 10, 0.2240437430260788275854177165e1],
    [0, 11, 0.6315787787694688181557024929],
    [0, 12, -0.889903364513333108206981174e-1],
    [0, 13, 0.18148505520854727256656404962e2],
    [0, 14, -0.91946323924783554000451984436e1],
    [0, 15, -0.44360363875948939664310572e1],

    [1, 0, 0.10427508642579134603413151009e2],
    [1, 5, 0.24228349177525818288430175319e3],
    [1, 6, 0.16520045171727028198505394887e3],
    [1, 7, -0.37454675472269020279518312152e3],
    [1, 8, -0.22113666853125306036270938578e2],
    [1, 9, 0.77334326684722638389603898808e1],
    [1, 10, -0.30674084731089398182061213626e2],
    [1, 11, -0.93321305264302278729567221706e1],
    [1, 12, 0.15697238121770843886131091075e2],
    [1, 13, -0.31139403219565177677282850411e2],
    [1, 14, -0.93529243588444783865713862664e1],
    [1, 15, 0.3581684148639408375246589854e2],

    [2, 0, 0.19985053242002433820987653617e2],
    [2, 5, -0.38703730874935176555105901742e3],
    [2, 6, -0.18917813819516756882830838328e3],
    [2, 7, 0.52780815920542364900561016686e3],
    [2, 8, -0.11573902539959630126141871134e2],
    [2, 9, 0.68812326946963000169666922661e1],
    [2, 10, -0.1000605096691083840318386098e1],
    [2, 11, 0.7777137798053443209286926574],
    [2, 12, -0.27782057523535084065932004339e1],
    [2, 13, -0.60196695231264120758267380846e2],
    [2, 14, 0.84320405506677161018159903784e2],
    [2, 15, 0.1199229113618278932803513003e2],

    [3, 0, -0.25693933462703749003312586129e2],
    [3, 5, -0.15418974869023643374053993627e3],
    [3, 6, -0.23152937917604549567536039109e3],
    [3, 7, 0.3576391179106141237828534991e3],
    [3, 8, 0.93405324183624310003907691704e2],
    [3, 9, -0.37458323136451633156875139351e2],
    [3, 10, 0.10409964950896230045147246184e3],
    [3, 11, 0.29840293426660503123344363579e2],
    [3, 12, -0.43533456590011143754432175058e2],
    [3, 13, 0.963245539591882829483949506e2],
    [3, 14, -0.39177261675615439165231486172e2],
    [3, 15, -0.14972683625798562581422125276e3],
  ]);
  return defineTableau({
    name: 'DOP853',
    order: 8,
    errorOrder: 7,
    denseOrder: 7,
    stages,
    extraStages: 3,
    totalStages: total,
    a,
    b,
    c,
    e,
    e3,
    denseRows: 4,
    d,
  });
})();
