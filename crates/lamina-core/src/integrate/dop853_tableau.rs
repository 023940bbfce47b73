//! Coefficients of DOP853 (Dormand–Prince 8(5,3)) with its seventh-order dense output.
//!
//! Values as published by Hairer & Wanner in the DOP853 Fortran code that accompanies
//! Hairer, Nørsett & Wanner, Solving Ordinary Differential Equations I (2nd ed., 1993),
//! sec. II.5–II.6. Stages 1–12 make the step (stage 12 at `t + h`), stage 13 is `f` at the new
//! state (first same as last) and stages 14–16 serve the dense output only. The literals keep
//! the published digits, more than an `f64` holds.
#![allow(clippy::excessive_precision)]

pub(super) const C2: f64 = 0.526001519587677318785587544488e-01;
pub(super) const C3: f64 = 0.789002279381515978178381316732e-01;
pub(super) const C4: f64 = 0.118350341907227396726757197510e+00;
pub(super) const C5: f64 = 0.281649658092772603273242802490e+00;
pub(super) const C6: f64 = 0.333333333333333333333333333333e+00;
pub(super) const C7: f64 = 0.25e+00;
pub(super) const C8: f64 = 0.307692307692307692307692307692e+00;
pub(super) const C9: f64 = 0.651282051282051282051282051282e+00;
pub(super) const C10: f64 = 0.6e+00;
pub(super) const C11: f64 = 0.857142857142857142857142857142e+00;
pub(super) const C14: f64 = 0.1e+00;
pub(super) const C15: f64 = 0.2e+00;
pub(super) const C16: f64 = 0.777777777777777777777777777778e+00;

pub(super) const B1: f64 = 5.42937341165687622380535766363e-2;
pub(super) const B6: f64 = 4.45031289275240888144113950566e0;
pub(super) const B7: f64 = 1.89151789931450038304281599044e0;
pub(super) const B8: f64 = -5.8012039600105847814672114227e0;
pub(super) const B9: f64 = 3.1116436695781989440891606237e-1;
pub(super) const B10: f64 = -1.52160949662516078556178806805e-1;
pub(super) const B11: f64 = 2.01365400804030348374776537501e-1;
pub(super) const B12: f64 = 4.47106157277725905176885569043e-2;

/// Weights of the third-order solution (on stages 1, 9, 12) for the second error estimate.
pub(super) const BHH1: f64 = 0.244094488188976377952755905512e+00;
pub(super) const BHH2: f64 = 0.733846688281611857341361741547e+00;
pub(super) const BHH3: f64 = 0.220588235294117647058823529412e-01;

/// Weights of the fifth-order error estimate.
pub(super) const ER1: f64 = 0.1312004499419488073250102996e-01;
pub(super) const ER6: f64 = -0.1225156446376204440720569753e+01;
pub(super) const ER7: f64 = -0.4957589496572501915214079952e+00;
pub(super) const ER8: f64 = 0.1664377182454986536961530415e+01;
pub(super) const ER9: f64 = -0.3503288487499736816886487290e+00;
pub(super) const ER10: f64 = 0.3341791187130174790297318841e+00;
pub(super) const ER11: f64 = 0.8192320648511571246570742613e-01;
pub(super) const ER12: f64 = -0.2235530786388629525884427845e-01;

pub(super) const A21: f64 = 5.26001519587677318785587544488e-2;
pub(super) const A31: f64 = 1.97250569845378994544595329183e-2;
pub(super) const A32: f64 = 5.91751709536136983633785987549e-2;
pub(super) const A41: f64 = 2.95875854768068491816892993775e-2;
pub(super) const A43: f64 = 8.87627564304205475450678981324e-2;
pub(super) const A51: f64 = 2.41365134159266685502369798665e-1;
pub(super) const A53: f64 = -8.84549479328286085344864962717e-1;
pub(super) const A54: f64 = 9.24834003261792003115737966543e-1;
pub(super) const A61: f64 = 3.7037037037037037037037037037e-2;
pub(super) const A64: f64 = 1.70828608729473871279604482173e-1;
pub(super) const A65: f64 = 1.25467687566822425016691814123e-1;
pub(super) const A71: f64 = 3.7109375e-2;
pub(super) const A74: f64 = 1.70252211019544039314978060272e-1;
pub(super) const A75: f64 = 6.02165389804559606850219397283e-2;
pub(super) const A76: f64 = -1.7578125e-2;
pub(super) const A81: f64 = 3.70920001185047927108779319836e-2;
pub(super) const A84: f64 = 1.70383925712239993810214054705e-1;
pub(super) const A85: f64 = 1.07262030446373284651809199168e-1;
pub(super) const A86: f64 = -1.53194377486244017527936158236e-2;
pub(super) const A87: f64 = 8.27378916381402288758473766002e-3;
pub(super) const A91: f64 = 6.24110958716075717114429577812e-1;
pub(super) const A94: f64 = -3.36089262944694129406857109825e0;
pub(super) const A95: f64 = -8.68219346841726006818189891453e-1;
pub(super) const A96: f64 = 2.75920996994467083049415600797e1;
pub(super) const A97: f64 = 2.01540675504778934086186788979e1;
pub(super) const A98: f64 = -4.34898841810699588477366255144e1;
pub(super) const A101: f64 = 4.77662536438264365890433908527e-1;
pub(super) const A104: f64 = -2.48811461997166764192642586468e0;
pub(super) const A105: f64 = -5.90290826836842996371446475743e-1;
pub(super) const A106: f64 = 2.12300514481811942347288949897e1;
pub(super) const A107: f64 = 1.52792336328824235832596922938e1;
pub(super) const A108: f64 = -3.32882109689848629194453265587e1;
pub(super) const A109: f64 = -2.03312017085086261358222928593e-2;
pub(super) const A111: f64 = -9.3714243008598732571704021658e-1;
pub(super) const A114: f64 = 5.18637242884406370830023853209e0;
pub(super) const A115: f64 = 1.09143734899672957818500254654e0;
pub(super) const A116: f64 = -8.14978701074692612513997267357e0;
pub(super) const A117: f64 = -1.85200656599969598641566180701e1;
pub(super) const A118: f64 = 2.27394870993505042818970056734e1;
pub(super) const A119: f64 = 2.49360555267965238987089396762e0;
pub(super) const A1110: f64 = -3.0467644718982195003823669022e0;
pub(super) const A121: f64 = 2.27331014751653820792359768449e0;
pub(super) const A124: f64 = -1.05344954667372501984066689879e1;
pub(super) const A125: f64 = -2.00087205822486249909675718444e0;
pub(super) const A126: f64 = -1.79589318631187989172765950534e1;
pub(super) const A127: f64 = 2.79488845294199600508499808837e1;
pub(super) const A128: f64 = -2.85899827713502369474065508674e0;
pub(super) const A129: f64 = -8.87285693353062954433549289258e0;
pub(super) const A1210: f64 = 1.23605671757943030647266201528e1;
pub(super) const A1211: f64 = 6.43392746015763530355970484046e-1;

pub(super) const A141: f64 = 5.61675022830479523392909219681e-2;
pub(super) const A147: f64 = 2.53500210216624811088794765333e-1;
pub(super) const A148: f64 = -2.46239037470802489917441475441e-1;
pub(super) const A149: f64 = -1.24191423263816360469010140626e-1;
pub(super) const A1410: f64 = 1.5329179827876569731206322685e-1;
pub(super) const A1411: f64 = 8.20105229563468988491666602057e-3;
pub(super) const A1412: f64 = 7.56789766054569976138603589584e-3;
pub(super) const A1413: f64 = -8.298e-3;

pub(super) const A151: f64 = 3.18346481635021405060768473261e-2;
pub(super) const A156: f64 = 2.83009096723667755288322961402e-2;
pub(super) const A157: f64 = 5.35419883074385676223797384372e-2;
pub(super) const A158: f64 = -5.49237485713909884646569340306e-2;
pub(super) const A1511: f64 = -1.08347328697249322858509316994e-4;
pub(super) const A1512: f64 = 3.82571090835658412954920192323e-4;
pub(super) const A1513: f64 = -3.40465008687404560802977114492e-4;
pub(super) const A1514: f64 = 1.41312443674632500278074618366e-1;
pub(super) const A161: f64 = -4.28896301583791923408573538692e-1;
pub(super) const A166: f64 = -4.69762141536116384314449447206e0;
pub(super) const A167: f64 = 7.68342119606259904184240953878e0;
pub(super) const A168: f64 = 4.06898981839711007970213554331e0;
pub(super) const A169: f64 = 3.56727187455281109270669543021e-1;
pub(super) const A1613: f64 = -1.39902416515901462129418009734e-3;
pub(super) const A1614: f64 = 2.9475147891527723389556272149e0;
pub(super) const A1615: f64 = -9.15095847217987001081870187138e0;

/// Dense output: the fifth to eighth interpolant coefficients (before the factor `h`).
pub(super) const D41: f64 = -0.84289382761090128651353491142e+01;
pub(super) const D46: f64 = 0.56671495351937776962531783590e+00;
pub(super) const D47: f64 = -0.30689499459498916912797304727e+01;
pub(super) const D48: f64 = 0.23846676565120698287728149680e+01;
pub(super) const D49: f64 = 0.21170345824450282767155149946e+01;
pub(super) const D410: f64 = -0.87139158377797299206789907490e+00;
pub(super) const D411: f64 = 0.22404374302607882758541771650e+01;
pub(super) const D412: f64 = 0.63157877876946881815570249290e+00;
pub(super) const D413: f64 = -0.88990336451333310820698117400e-01;
pub(super) const D414: f64 = 0.18148505520854727256656404962e+02;
pub(super) const D415: f64 = -0.91946323924783554000451984436e+01;
pub(super) const D416: f64 = -0.44360363875948939664310572000e+01;

pub(super) const D51: f64 = 0.10427508642579134603413151009e+02;
pub(super) const D56: f64 = 0.24228349177525818288430175319e+03;
pub(super) const D57: f64 = 0.16520045171727028198505394887e+03;
pub(super) const D58: f64 = -0.37454675472269020279518312152e+03;
pub(super) const D59: f64 = -0.22113666853125306036270938578e+02;
pub(super) const D510: f64 = 0.77334326684722638389603898808e+01;
pub(super) const D511: f64 = -0.30674084731089398182061213626e+02;
pub(super) const D512: f64 = -0.93321305264302278729567221706e+01;
pub(super) const D513: f64 = 0.15697238121770843886131091075e+02;
pub(super) const D514: f64 = -0.31139403219565177677282850411e+02;
pub(super) const D515: f64 = -0.93529243588444783865713862664e+01;
pub(super) const D516: f64 = 0.35816841486394083752465898540e+02;

pub(super) const D61: f64 = 0.19985053242002433820987653617e+02;
pub(super) const D66: f64 = -0.38703730874935176555105901742e+03;
pub(super) const D67: f64 = -0.18917813819516756882830838328e+03;
pub(super) const D68: f64 = 0.52780815920542364900561016686e+03;
pub(super) const D69: f64 = -0.11573902539959630126141871134e+02;
pub(super) const D610: f64 = 0.68812326946963000169666922661e+01;
pub(super) const D611: f64 = -0.10006050966910838403183860980e+01;
pub(super) const D612: f64 = 0.77771377980534432092869265740e+00;
pub(super) const D613: f64 = -0.27782057523535084065932004339e+01;
pub(super) const D614: f64 = -0.60196695231264120758267380846e+02;
pub(super) const D615: f64 = 0.84320405506677161018159903784e+02;
pub(super) const D616: f64 = 0.11992291136182789328035130030e+02;

pub(super) const D71: f64 = -0.25693933462703749003312586129e+02;
pub(super) const D76: f64 = -0.15418974869023643374053993627e+03;
pub(super) const D77: f64 = -0.23152937917604549567536039109e+03;
pub(super) const D78: f64 = 0.35763911791061412378285349910e+03;
pub(super) const D79: f64 = 0.93405324183624310003907691704e+02;
pub(super) const D710: f64 = -0.37458323136451633156875139351e+02;
pub(super) const D711: f64 = 0.10409964950896230045147246184e+03;
pub(super) const D712: f64 = 0.29840293426660503123344363579e+02;
pub(super) const D713: f64 = -0.43533456590011143754432175058e+02;
pub(super) const D714: f64 = 0.96324553959188282948394950600e+02;
pub(super) const D715: f64 = -0.39177261675615439165231486172e+02;
pub(super) const D716: f64 = -0.14972683625798562581422125276e+03;

#[cfg(test)]
mod tests {
    use super::*;

    /// Nodes of stages 1–16 (stages 12 and 13 at `t + h`).
    const C: [f64; 16] = [
        0.0, C2, C3, C4, C5, C6, C7, C8, C9, C10, C11, 1.0, 1.0, C14, C15, C16,
    ];
    /// Weights of the eighth-order solution on stages 1–12.
    const B: [f64; 12] = [B1, 0.0, 0.0, 0.0, 0.0, B6, B7, B8, B9, B10, B11, B12];

    /// Rows of A as (stage index from 1, coefficient) pairs.
    fn rows() -> Vec<(usize, Vec<(usize, f64)>)> {
        let b_row: Vec<(usize, f64)> = B.iter().enumerate().map(|(j, b)| (j + 1, *b)).collect();
        vec![
            (2, vec![(1, A21)]),
            (3, vec![(1, A31), (2, A32)]),
            (4, vec![(1, A41), (3, A43)]),
            (5, vec![(1, A51), (3, A53), (4, A54)]),
            (6, vec![(1, A61), (4, A64), (5, A65)]),
            (7, vec![(1, A71), (4, A74), (5, A75), (6, A76)]),
            (8, vec![(1, A81), (4, A84), (5, A85), (6, A86), (7, A87)]),
            (
                9,
                vec![(1, A91), (4, A94), (5, A95), (6, A96), (7, A97), (8, A98)],
            ),
            (
                10,
                vec![
                    (1, A101),
                    (4, A104),
                    (5, A105),
                    (6, A106),
                    (7, A107),
                    (8, A108),
                    (9, A109),
                ],
            ),
            (
                11,
                vec![
                    (1, A111),
                    (4, A114),
                    (5, A115),
                    (6, A116),
                    (7, A117),
                    (8, A118),
                    (9, A119),
                    (10, A1110),
                ],
            ),
            (
                12,
                vec![
                    (1, A121),
                    (4, A124),
                    (5, A125),
                    (6, A126),
                    (7, A127),
                    (8, A128),
                    (9, A129),
                    (10, A1210),
                    (11, A1211),
                ],
            ),
            (13, b_row),
            (
                14,
                vec![
                    (1, A141),
                    (7, A147),
                    (8, A148),
                    (9, A149),
                    (10, A1410),
                    (11, A1411),
                    (12, A1412),
                    (13, A1413),
                ],
            ),
            (
                15,
                vec![
                    (1, A151),
                    (6, A156),
                    (7, A157),
                    (8, A158),
                    (11, A1511),
                    (12, A1512),
                    (13, A1513),
                    (14, A1514),
                ],
            ),
            (
                16,
                vec![
                    (1, A161),
                    (6, A166),
                    (7, A167),
                    (8, A168),
                    (9, A169),
                    (13, A1613),
                    (14, A1614),
                    (15, A1615),
                ],
            ),
        ]
    }

    #[test]
    fn eighth_order_weights_meet_the_quadrature_conditions() {
        for k in 1..=8 {
            let sum: f64 = B.iter().zip(C).map(|(b, c)| b * c.powi(k - 1)).sum();
            // [analytic] order conditions sum(b c^(k-1)) = 1/k; REFERENCES case 14
            // (coefficients from Hairer's published DOP853 code)
            assert!((sum - 1.0 / f64::from(k)).abs() < 1e-14, "k = {k}: {sum}");
        }
    }

    #[test]
    fn row_sums_equal_the_nodes() {
        for (stage, row) in rows() {
            let sum: f64 = row.iter().map(|(_, a)| a).sum();
            // [analytic] row-sum condition sum_j a_ij = c_i
            assert!((sum - C[stage - 1]).abs() < 1e-13, "stage {stage}: {sum}");
            // explicit: a stage uses only earlier stages
            assert!(row.iter().all(|(j, _)| *j < stage));
        }
    }

    #[test]
    fn error_estimators_are_consistent() {
        let er = [ER1, ER6, ER7, ER8, ER9, ER10, ER11, ER12];
        // [analytic] the difference of two consistent solutions has weights summing to 0
        assert!(er.iter().sum::<f64>().abs() < 1e-14);
        // [analytic] the third-order weights are consistent (sum 1)
        assert!((BHH1 + BHH2 + BHH3 - 1.0).abs() < 1e-15);
        // [analytic] and integrate t exactly: sum(bhh c) = 1/2 with c = (0, C9, 1)
        assert!((BHH2 * C9 + BHH3 - 0.5).abs() < 1e-15);
    }
}
