import type { Run, RunResults } from '@evenhand/entities';

/** A confirmatory run of the demo study's primary comparison, as the API answers it (numbers from a real run). */
export function demoResults(): RunResults {
  return structuredClone(results);
}

export function demoRun(overrides: Partial<Run> = {}): Run {
  return { ...structuredClone(run), results: demoResults(), ...overrides };
}

const results: RunResults = {
  // The demo's losses, each under its reason: counts consistent with the arms' analysed students below.
  accounting: {
    reads: ['accepted'],
    needsPretest: true,
    arms: [
      {
        arm: 'intervention',
        classrooms: { randomised: 12, analysed: 10, lost: [{ reason: 'awaiting-review', n: 1 }, { reason: 'returned', n: 1 }] },
        students: {
          randomised: 313,
          analysed: 227,
          lost: [
            { reason: 'awaiting-review', n: 28 },
            { reason: 'returned', n: 26 },
            { reason: 'left-study', n: 10 },
            { reason: 'no-outcome-score', n: 12 },
            { reason: 'no-pretest', n: 10 },
          ],
        },
      },
      {
        arm: 'comparison',
        classrooms: { randomised: 12, analysed: 11, lost: [{ reason: 'sheet-not-entered', n: 1 }] },
        students: {
          randomised: 299,
          analysed: 244,
          lost: [
            { reason: 'sheet-not-entered', n: 25 },
            { reason: 'left-study', n: 9 },
            { reason: 'no-outcome-score', n: 11 },
            { reason: 'no-pretest', n: 10 },
          ],
        },
      },
    ],
    // attrition() of @evenhand/stats on the counts above.
    attrition: {
      students: {
        overall: 23.039215686274506,
        differential: 9.081389509226714,
        attrition1: 27.47603833865815,
        attrition2: 18.394648829431436,
        cautious: { boundary: 'cautious', maxDifferential: 5.03529411764706, band: 'high', interpolated: true, bracketingRows: [20, 25], basis: 'interpolated' },
        optimistic: { boundary: 'optimistic', maxDifferential: 9.513725490196078, band: 'low', interpolated: true, bracketingRows: [20, 25], basis: 'interpolated' },
      },
      classrooms: {
        overall: 12.5,
        differential: 8.333333333333327,
        attrition1: 16.666666666666664,
        attrition2: 8.333333333333337,
        cautious: { boundary: 'cautious', maxDifferential: 6.133333333333333, band: 'high', interpolated: true, bracketingRows: [10, 13], basis: 'interpolated' },
        optimistic: { boundary: 'optimistic', maxDifferential: 10.816666666666666, band: 'low', interpolated: true, bracketingRows: [10, 13], basis: 'interpolated' },
      },
    },
    lostClassrooms: [
      { classroomId: '0b6e2a51-3c0d-4f1e-9a41-1d5c2f7a9e01', arm: 'intervention', reason: 'returned', students: 26 },
      { classroomId: '5d8f1c22-7b3e-4a90-8c11-2e6b9d4f0a02', arm: 'intervention', reason: 'awaiting-review', students: 28 },
      { classroomId: '9a3c7e13-1f2b-4d6a-b5e0-4c8d2a6f1b03', arm: 'comparison', reason: 'sheet-not-entered', students: 25 },
    ],
  },
  wave: {
    id: '60960c7e-9499-4073-b98b-7b4fda541b68',
    name: 'Spring 2026'
  },
  alpha: 0.05,
  sites: [
    {
      g: -0.315564249188611,
      ci: [
        -0.8075240876372569,
        0.176395589260035
      ],
      n1: 42,
      n2: 26,
      se: 0.251004529842978,
      mean1: 134.35714285714286,
      mean2: 144.19230769230768,
      siteId: '8fe67e41-87dd-4a7a-9569-248b8e291b32',
      weight: 0.16619276780563536,
      siteName: 'Alderquill Elementary'
    },
    {
      g: -0.2935752820817671,
      ci: [
        -0.8245794242320701,
        0.23742886006853592
      ],
      n1: 20,
      n2: 44,
      se: 0.2709254590078165,
      mean1: 104.7,
      mean2: 114.04545454545455,
      siteId: '9befd8b0-c423-4336-968e-17efb0e580cc',
      weight: 0.1642951423847824,
      siteName: 'Brackenwold Middle School'
    },
    {
      g: 0.34329656218296584,
      ci: [
        -0.06992607405568263,
        0.7565191984216143
      ],
      n1: 50,
      n2: 42,
      se: 0.21083174971483964,
      mean1: 128.6,
      mean2: 117.38095238095238,
      siteId: '125fcf0b-850c-4d21-95e0-720df687d330',
      weight: 0.16969012859560592,
      siteName: 'Cinderhaze Elementary'
    },
    {
      g: -0.8761066583847057,
      ci: [
        -1.3111199735029047,
        -0.4410933432665066
      ],
      n1: 45,
      n2: 44,
      se: 0.2219496473147102,
      mean1: 100.04444444444445,
      mean2: 127.0909090909091,
      siteId: 'cc9c27ad-9cdd-472f-8b19-47604adfa89d',
      weight: 0.1687690589602538,
      siteName: 'Dunnowick Park Elementary'
    },
    {
      g: 1.6032329836614687,
      ci: [
        1.1306958545368826,
        2.0757701127860546
      ],
      n1: 47,
      n2: 44,
      se: 0.2410948021759067,
      mean1: 128.61702127659575,
      mean2: 79.1590909090909,
      siteId: '6eb623f6-5050-4352-8452-e221818d8169',
      weight: 0.16709797837246956,
      siteName: 'Emberlark Middle School'
    },
    {
      g: 1.103330564544197,
      ci: [
        0.5655350613287061,
        1.641126067759688
      ],
      n1: 23,
      n2: 44,
      se: 0.27439050281410954,
      mean1: 144.69565217391303,
      mean2: 112.11363636363636,
      siteId: 'bb65c852-ee12-424c-a6ad-b9727960fdff',
      weight: 0.163954923881253,
      siteName: 'Fernquillow Elementary'
    }
  ],
  pooled: {
    p: 0.5039103631917898,
    q: 76.15433719957204,
    ci: [
      -0.4995821592628789,
      1.0166028030449115
    ],
    df: 5,
    i2: 0.9343438576991765,
    pQ: 5.341337131243832e-15,
    se: 0.38678898547811696,
    tau2: 0.8371906469645709,
    estimate: 0.25851032189101625
  },
  measure: {
    id: 'edb03069-b06f-4d5e-8fd8-259910f2635c',
    kind: 'achievement',
    name: 'Oral reading fluency (words correct per minute)',
    higherIsBetter: true
  },
  primary: {
    p: 0.0019714446688204827,
    t: 3.112098207481054,
    ci: [
      3.6813236489698244,
      16.294591711758102
    ],
    df: 467.3602563624679,
    se: 3.209396688174651,
    test: 'welch',
    confidence: 0.95,
    alternative: 'two-sided',
    significant: true,
    meanDifference: 9.987957680363962
  },
  cautions: [
    'A p-value is not the size or the importance of an effect: read it with the effect size and its interval.',
    'These results describe groups of students, not individual students or teachers: do not use them to evaluate teachers or to place students.',
    'Student records are protected by law and district policy; share these results as your district’s data-privacy rules and research review board allow.'
  ],
  clustering: {
    p: 0.1375971738375772,
    df: 322.94352146677085,
    icc: 0.15,
    iccSource: 'assumed',
    tAdjusted: 1.4884914124827016,
    observedIcc: 0.352783024191405,
    significant: false,
    designEffect: 4.2142857142857135,
    averageClusterSize: 22.428571428571427
  },
  effectSize: {
    g: 0.28516832878843973,
    ci: [
      0.10351471547521321,
      0.4668219421016663
    ],
    se: 0.09268211801139566,
    improvementIndex: 11.224240832938271,
    substantivelyImportant: true
  },
  diagnostics: {
    notes: [],
    leveneMean: {
      p: 0.07544578595702618,
      df1: 1,
      df2: 469,
      statistic: 3.1744404878774515
    },
    shapiroWilk: [
      {
        p: 0.9830724112850798,
        w: 0.9975995833622112,
        arm: 'intervention'
      },
      {
        p: 0.3688060475155933,
        w: 0.9934936353621259,
        arm: 'comparison'
      }
    ],
    leveneMedian: {
      p: 0.08476475102053305,
      df1: 1,
      df2: 469,
      statistic: 2.983707841490737
    },
    varianceRatio: {
      f: 0.7682167552582401,
      p: 0.044664794217962406,
      df1: 226,
      df2: 243
    }
  },
  planVersion: 2,
  sensitivity: {
    welch: {
      p: 0.0019714446688204827,
      t: 3.112098207481054,
      ci: [
        3.6813236489698244,
        16.294591711758102
      ],
      df: 467.3602563624679,
      se: 3.209396688174651,
      confidence: 0.95,
      alternative: 'two-sided',
      meanDifference: 9.987957680363962
    },
    ancova: {
      g: 0.32380672622914214,
      n: 471,
      p: 1.8414458944950226e-8,
      t: 5.725910785425499,
      ci: [
        7.449110702428337,
        15.233407317258424
      ],
      df: 468,
      se: 1.9806908341483354,
      adjustedDifference: 11.34125900984338
    },
    student: {
      p: 0.002069508754797332,
      t: 3.097377706958379,
      ci: [
        3.6514084554428736,
        16.32450690528505
      ],
      df: 469,
      se: 3.224649566607788,
      confidence: 0.95,
      alternative: 'two-sided',
      meanDifference: 9.987957680363962
    },
    mannWhitney: {
      p: 0.005137640341149162,
      u: 31824.5,
      z: 2.7982746649352985,
      method: 'normal'
    },
    classroomMeans: {
      p: 0.24674348187256134,
      t: 1.1954171934233842,
      ci: [
        -8.53977873358881,
        31.25838102005254
      ],
      df: 18.854644359786644,
      se: 9.502373904043985,
      confidence: 0.95,
      alternative: 'two-sided',
      classrooms1: 10,
      classrooms2: 11,
      meanDifference: 11.359301143231866
    }
  },
  descriptives: [
    {
      sd: 32.51919121621613,
      se: 2.1583745284579687,
      arm: 'intervention',
      mean: 123.53303964757708,
      students: 227,
      quantiles: {
        q1: 101,
        q3: 147,
        max: 217,
        min: 27,
        median: 124
      },
      classrooms: 10
    },
    {
      sd: 37.10204502801353,
      se: 2.375215042258334,
      arm: 'comparison',
      mean: 113.54508196721312,
      students: 244,
      quantiles: {
        q1: 90,
        q3: 137,
        max: 204,
        min: 3,
        median: 116
      },
      classrooms: 11
    }
  ],
  engineVersion: 'evenhand-stats 0.1.0'
};

const run: Omit<Run, 'results'> = {
  id: '047a627e-ad19-407c-a49f-c5661803f170',
  comparisonId: '529d2883-2949-401e-bb2b-85800c4103a5',
  studyId: 'c40f0c41-126b-4104-bf98-f984f59883c5',
  kind: 'confirmatory',
  state: 'finished',
  reason: null,
  planVersion: 2,
  engineVersion: 'evenhand-stats 0.1.0',
  dataSha256: 'fc0600475c91e020d5c87baafff97e3db0b191da753fb0d577cc717787d1d84e',
  error: null,
  queuedAt: '2026-12-02T01:44:10.986Z',
  finishedAt: '2026-12-02T01:44:11.431Z',
  lockedAt: null,
  scheduledFor: null,
  multiplicity: {
    adjustedP: 0.003942889337640965,
    rejected: true,
    comparisons: 2
  }
};
