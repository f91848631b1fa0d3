/**
 * Stable isotopes of the elements a mass spectrometrist meets in biomolecules, polymers, salts,
 * matrices, calibrants and metal adducts: exact atomic masses and representative abundances.
 *
 * Sources:
 * - Atomic masses: AME 2020, Wang et al., Chinese Physics C 45, 030003 (2021), as tabulated by
 *   IUPAC CIAAW ("Atomic masses", compiled from AME 2020). Values were copied by hand from a
 *   plain-text copy of that table (neutral atoms, u, 12C = 12 exactly); not from memory.
 * - Abundances: IUPAC CIAAW representative isotopic compositions (Meija et al., "Isotopic
 *   compositions of the elements 2013", Pure Appl. Chem. 88, 293 (2016); same values as the
 *   2009 table, Berglund & Wieser, Pure Appl. Chem. 83, 397 (2011)). Entered (from memory).
 * Both are cross-checked isotope by isotope against the `chemical-elements` npm package (the data
 * behind `isotopic-distribution`) in tests/ions/chemistry/elements.test.ts; the abundances agree
 * exactly, the masses within 1e-6 u except where AME 2020 revised AME 2016 (listed in that test).
 *
 * Real samples vary (e.g. 13C by ±0.1 % absolute between sources); representative values are
 * what isotope-pattern work uses by convention.
 */

export interface IsotopeData {
  /** Mass number A (protons + neutrons). */
  readonly massNumber: number;
  /** Atomic (neutral-atom) mass in unified atomic mass units. */
  readonly mass_u: number;
  /** Representative amount fraction in natural material, as tabulated (sums to 1 within rounding). */
  readonly abundance: number;
}

export interface ElementData {
  readonly symbol: string;
  readonly atomicNumber: number;
  /** Stable (or primordial) isotopes with a tabulated abundance, by increasing mass number. */
  readonly isotopes: readonly IsotopeData[];
  /**
   * The most abundant isotope: the one monoisotopic masses use by mass-spectrometry convention
   * (e.g. 11B, 56Fe, 80Se, not the lightest). Common practice, no source.
   */
  readonly principal: IsotopeData;
}

/** Atomic mass of 12C, exact by definition of the unified atomic mass unit. */
export const CARBON12_MASS_U = 12;

type Row = readonly [symbol: string, atomicNumber: number, isotopes: readonly (readonly [number, number, number])[]];

// [symbol, Z, [[A, mass_u (AME 2020), representative abundance (IUPAC)], ...]]
const ROWS: readonly Row[] = [
  ['H', 1, [[1, 1.007825031898, 0.999885], [2, 2.014101777844, 0.000115]]],
  ['He', 2, [[3, 3.01602932197, 0.00000134], [4, 4.00260325413, 0.99999866]]],
  ['Li', 3, [[6, 6.01512288742, 0.0759], [7, 7.01600343426, 0.9241]]],
  ['Be', 4, [[9, 9.012183062, 1]]],
  ['B', 5, [[10, 10.012936862, 0.199], [11, 11.009305166, 0.801]]],
  ['C', 6, [[12, 12, 0.9893], [13, 13.00335483534, 0.0107]]],
  ['N', 7, [[14, 14.00307400425, 0.99636], [15, 15.00010889827, 0.00364]]],
  ['O', 8, [[16, 15.99491461926, 0.99757], [17, 16.99913175595, 0.00038], [18, 17.99915961214, 0.00205]]],
  ['F', 9, [[19, 18.99840316207, 1]]],
  ['Ne', 10, [[20, 19.99244017525, 0.9048], [21, 20.993846685, 0.0027], [22, 21.991385113, 0.0925]]],
  ['Na', 11, [[23, 22.98976928195, 1]]],
  ['Mg', 12, [[24, 23.985041689, 0.7899], [25, 24.985836966, 0.1000], [26, 25.982592972, 0.1101]]],
  ['Al', 13, [[27, 26.981538408, 1]]],
  ['Si', 14, [[28, 27.97692653442, 0.92223], [29, 28.97649466434, 0.04685], [30, 29.973770137, 0.03092]]],
  ['P', 15, [[31, 30.97376199768, 1]]],
  ['S', 16, [[32, 31.97207117354, 0.9499], [33, 32.97145890862, 0.0075], [34, 33.967867011, 0.0425], [36, 35.967080692, 0.0001]]],
  ['Cl', 17, [[35, 34.968852694, 0.7576], [37, 36.965902573, 0.2424]]],
  ['Ar', 18, [[36, 35.967545106, 0.003336], [38, 37.962732102, 0.000629], [40, 39.96238312204, 0.996035]]],
  ['K', 19, [[39, 38.96370648482, 0.932581], [40, 39.963998165, 0.000117], [41, 40.96182525611, 0.067302]]],
  ['Ca', 20, [[40, 39.962590850, 0.96941], [42, 41.958617780, 0.00647], [43, 42.958766381, 0.00135], [44, 43.955481489, 0.02086], [46, 45.953687726, 0.00004], [48, 47.952522654, 0.00187]]],
  ['Sc', 21, [[45, 44.955907051, 1]]],
  ['Ti', 22, [[46, 45.952626356, 0.0825], [47, 46.951757491, 0.0744], [48, 47.947940677, 0.7372], [49, 48.947864391, 0.0541], [50, 49.944785622, 0.0518]]],
  ['V', 23, [[50, 49.947156681, 0.00250], [51, 50.943957664, 0.99750]]],
  ['Cr', 24, [[50, 49.946042209, 0.04345], [52, 51.940504714, 0.83789], [53, 52.940646304, 0.09501], [54, 53.938877359, 0.02365]]],
  ['Mn', 25, [[55, 54.938043040, 1]]],
  ['Fe', 26, [[54, 53.939608189, 0.05845], [56, 55.934935537, 0.91754], [57, 56.935391950, 0.02119], [58, 57.933273575, 0.00282]]],
  ['Co', 27, [[59, 58.933193524, 1]]],
  ['Ni', 28, [[58, 57.935341650, 0.68077], [60, 59.930785129, 0.26223], [61, 60.931054819, 0.011399], [62, 61.928344753, 0.036346], [64, 63.927966228, 0.009255]]],
  ['Cu', 29, [[63, 62.929597119, 0.6915], [65, 64.927789476, 0.3085]]],
  ['Zn', 30, [[64, 63.929141776, 0.4917], [66, 65.926033639, 0.2773], [67, 66.927127422, 0.0404], [68, 67.924844232, 0.1845], [70, 69.925319175, 0.0061]]],
  ['Ga', 31, [[69, 68.925573528, 0.60108], [71, 70.924702554, 0.39892]]],
  ['Ge', 32, [[70, 69.924248542, 0.2057], [72, 71.922075824, 0.2745], [73, 72.923458954, 0.0775], [74, 73.921177760, 0.3650], [76, 75.921402725, 0.0773]]],
  ['As', 33, [[75, 74.921594562, 1]]],
  ['Se', 34, [[74, 73.922475933, 0.0089], [76, 75.919213702, 0.0937], [77, 76.919914150, 0.0763], [78, 77.917309244, 0.2377], [80, 79.916521761, 0.4961], [82, 81.916699531, 0.0873]]],
  ['Br', 35, [[79, 78.918337574, 0.5069], [81, 80.916288197, 0.4931]]],
  ['Kr', 36, [[78, 77.920366341, 0.00355], [80, 79.916377940, 0.02286], [82, 81.91348115368, 0.11593], [83, 82.914126516, 0.11500], [84, 83.91149772708, 0.56987], [86, 85.91061062468, 0.17279]]],
  ['Rb', 37, [[85, 84.91178973604, 0.7217], [87, 86.909180529, 0.2783]]],
  ['Sr', 38, [[84, 83.913419118, 0.0056], [86, 85.90926072473, 0.0986], [87, 86.90887749454, 0.0700], [88, 87.905612253, 0.8258]]],
  ['Y', 39, [[89, 88.905838156, 1]]],
  ['Zr', 40, [[90, 89.904698755, 0.5145], [91, 90.905640205, 0.1122], [92, 91.905035336, 0.1715], [94, 93.906312523, 0.1738], [96, 95.908277615, 0.0280]]],
  ['Nb', 41, [[93, 92.906373170, 1]]],
  ['Mo', 42, [[92, 91.906807153, 0.1453], [94, 93.905083586, 0.0915], [95, 94.905837436, 0.1584], [96, 95.904674770, 0.1667], [97, 96.906016903, 0.0960], [98, 97.905403609, 0.2439], [100, 99.907467982, 0.0982]]],
  ['Ru', 44, [[96, 95.907588910, 0.0554], [98, 97.905286709, 0.0187], [99, 98.905930284, 0.1276], [100, 99.904210460, 0.1260], [101, 100.905573086, 0.1706], [102, 101.904340312, 0.3155], [104, 103.905425312, 0.1862]]],
  ['Rh', 45, [[103, 102.905494081, 1]]],
  ['Pd', 46, [[102, 101.905632292, 0.0102], [104, 103.904030393, 0.1114], [105, 104.905079479, 0.2233], [106, 105.903480287, 0.2733], [108, 107.903891806, 0.2646], [110, 109.905172878, 0.1172]]],
  ['Ag', 47, [[107, 106.905091509, 0.51839], [109, 108.904755778, 0.48161]]],
  ['Cd', 48, [[106, 105.906459791, 0.0125], [108, 107.904183588, 0.0089], [110, 109.903007470, 0.1249], [111, 110.904183776, 0.1280], [112, 111.902763896, 0.2413], [113, 112.904408105, 0.1222], [114, 113.903364998, 0.2873], [116, 115.904763230, 0.0749]]],
  ['In', 49, [[113, 112.904060451, 0.0429], [115, 114.903878772, 0.9571]]],
  ['Sn', 50, [[112, 111.904824894, 0.0097], [114, 113.902780130, 0.0066], [115, 114.903344695, 0.0034], [116, 115.901742825, 0.1454], [117, 116.902954036, 0.0768], [118, 117.901606630, 0.2422], [119, 118.903311266, 0.0859], [120, 119.902202557, 0.3258], [122, 121.903445494, 0.0463], [124, 123.905279619, 0.0579]]],
  ['Sb', 51, [[121, 120.903811353, 0.5721], [123, 122.904215292, 0.4279]]],
  ['Te', 52, [[120, 119.904065779, 0.0009], [122, 121.903044708, 0.0255], [123, 122.904271022, 0.0089], [124, 123.902818341, 0.0474], [125, 124.904431178, 0.0707], [126, 125.903312144, 0.1884], [128, 127.904461237, 0.3174], [130, 129.906222745, 0.3408]]],
  ['I', 53, [[127, 126.904472592, 1]]],
  ['Xe', 54, [[124, 123.905885174, 0.000952], [126, 125.904297422, 0.000890], [128, 127.90353075341, 0.019102], [129, 128.90478085742, 0.264006], [130, 129.903509346, 0.040710], [131, 130.90508412808, 0.212324], [132, 131.90415508346, 0.269086], [134, 133.905393030, 0.104357], [136, 135.907214474, 0.088573]]],
  ['Cs', 55, [[133, 132.905451958, 1]]],
  ['Ba', 56, [[130, 129.906326002, 0.00106], [132, 131.905061231, 0.00101], [134, 133.904508249, 0.02417], [135, 134.905688447, 0.06592], [136, 135.904575800, 0.07854], [137, 136.905827207, 0.11232], [138, 137.905247059, 0.71698]]],
  ['Ir', 77, [[191, 190.960591455, 0.373], [193, 192.962923753, 0.627]]],
  ['Pt', 78, [[190, 189.959949823, 0.00012], [192, 191.961042667, 0.00782], [194, 193.962683498, 0.3286], [195, 194.964794325, 0.3378], [196, 195.964954648, 0.2521], [198, 197.967896718, 0.07356]]],
  ['Au', 79, [[197, 196.966570103, 1]]],
  ['Hg', 80, [[196, 195.965833445, 0.0015], [198, 197.966769177, 0.0997], [199, 198.968280994, 0.1687], [200, 199.968326941, 0.2310], [201, 200.970303054, 0.1318], [202, 201.970643604, 0.2986], [204, 203.973494037, 0.0687]]],
  ['Tl', 81, [[203, 202.972344098, 0.2952], [205, 204.974427318, 0.7048]]],
  ['Pb', 82, [[204, 203.973043506, 0.014], [206, 205.974465210, 0.241], [207, 206.975896821, 0.221], [208, 207.976652005, 0.524]]],
  ['Bi', 83, [[209, 208.980398599, 1]]],
];

function buildElement([symbol, atomicNumber, rows]: Row): ElementData {
  const isotopes = rows.map(([massNumber, mass_u, abundance]) => ({ massNumber, mass_u, abundance }));
  let principal = isotopes[0];
  for (const iso of isotopes) if (iso.abundance > principal.abundance) principal = iso;
  return { symbol, atomicNumber, isotopes, principal };
}

/** Every element of the table, keyed by symbol. */
export const ELEMENTS: Readonly<Record<string, ElementData>> = Object.freeze(
  Object.fromEntries(ROWS.map((row) => [row[0], buildElement(row)])),
);

/** Symbols in the table, by atomic number. */
export const ELEMENT_SYMBOLS: readonly string[] = ROWS.map((row) => row[0]);

export function lookupElement(symbol: string): ElementData | undefined {
  return Object.prototype.hasOwnProperty.call(ELEMENTS, symbol) ? ELEMENTS[symbol] : undefined;
}

export function lookupIsotope(symbol: string, massNumber: number): IsotopeData | undefined {
  return lookupElement(symbol)?.isotopes.find((iso) => iso.massNumber === massNumber);
}

// All 118 symbols, so that an element missing from the table is told apart from a typo.
const ALL_SYMBOLS = new Set(
  (
    'H He Li Be B C N O F Ne Na Mg Al Si P S Cl Ar K Ca Sc Ti V Cr Mn Fe Co Ni Cu Zn Ga Ge As Se Br Kr ' +
    'Rb Sr Y Zr Nb Mo Tc Ru Rh Pd Ag Cd In Sn Sb Te I Xe Cs Ba La Ce Pr Nd Pm Sm Eu Gd Tb Dy Ho Er Tm ' +
    'Yb Lu Hf Ta W Re Os Ir Pt Au Hg Tl Pb Bi Po At Rn Fr Ra Ac Th Pa U Np Pu Am Cm Bk Cf Es Fm Md No ' +
    'Lr Rf Db Sg Bh Hs Mt Ds Rg Cn Nh Fl Mc Lv Ts Og'
  ).split(' '),
);

/** True for any real element symbol, whether or not this table carries its isotopes. */
export function isElementSymbol(symbol: string): boolean {
  return ALL_SYMBOLS.has(symbol);
}
