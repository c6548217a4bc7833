/* ferrocirc — capillary pressure of a meniscus in a rectangular section.
 *
 * Young-Laplace with the two principal curvatures set by the walls (form as in Cho et al.
 * 2007, J. Colloid Interface Sci. 306:379): Pi = p_outer - p_inner
 *   = gamma [(cos th_top + cos th_bot)/h + (cos th_left + cos th_right)/w],
 * angles measured through the ferrofluid. Pi > 0 when the ferrofluid wets the walls. Units: N/m,
 * m, rad, Pa. */
#include <math.h>

#include "valve_int.h"

double fci_young_laplace(double gamma, double w, double h, double th_top, double th_bot,
                         double th_left, double th_right)
{
  return gamma * ((cos(th_top) + cos(th_bot)) / h + (cos(th_left) + cos(th_right)) / w);
}
