// Package lactate analyses blood-lactate tests by their published methods:
// step tests (lactate at the end of each step of rising power) and
// constant-power trials for the maximal lactate steady state (MLSS).
//
// Blood lactate is the balance of its production by glycolysis and its
// removal, mostly by oxidation in the aerobic system. Removal rises about
// linearly with power; production rises slowly, then steeply. MLSS is the
// highest constant power at which the two still balance: lactate settles
// instead of climbing. Field "threshold" and critical power approximate
// it; a step test locates the bend of the lactate curve, by several rules:
//
//   - fixed concentrations: the power at 2 mmol/L (Kindermann, Simon &
//     Keul 1979) and at 4 mmol/L, the onset of blood lactate accumulation
//     (Heck et al. 1985), interpolated between the steps that bracket it
//     (log-linearly: lactate rises about exponentially with power);
//   - baseline plus 1.0 mmol/L (common practice): baseline is the lowest
//     lactate of the steps before the curve starts rising;
//   - Dmax (Cheng et al. 1992): a third-order polynomial through the
//     steps, and the point of it farthest from the straight line joining
//     the first and last steps;
//   - modified Dmax (Bishop, Jenkins & Mackinnon 1998): the same, with the
//     line starting at the step before the first rise of 0.4 mmol/L or
//     more;
//   - log-log breakpoint (Beaver, Wasserman & Whipp 1985): two straight
//     lines fitted to log lactate against log power; the threshold is
//     where they meet.
//
// An MLSS trial passes when lactate rises by no more than 1 mmol/L from
// minute 10 to minute 30 (Heck et al. 1985; Beneke 2003); the MLSS lies
// between the highest passing and the lowest failing power.
//
// CP usually sits a little above MLSS (Pringle & Jones 2002); Compare puts
// a field estimate beside the lactate thresholds.
package lactate
