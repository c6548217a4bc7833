/* ferrocirc — the figure model of `plot`: panels, series and shaded spans (plot_int.h). The
 * figure owns everything appended to it; fci_fig_free releases it all. */
#include <string.h>

#include "ferrocirc/alloc.h"
#include "plot_int.h"

fci_panel *fci_fig_panel(fci_figure *fig, const char *ylabel)
{
  fci_panel *p = fc_realloc(fig->p, (size_t)(fig->np + 1) * sizeof *p);
  if (!p) return NULL;
  fig->p = p;
  p = &fig->p[fig->np++];
  memset(p, 0, sizeof *p);
  snprintf(p->ylabel, sizeof p->ylabel, "%s", ylabel);
  return p;
}

fci_series *fci_panel_series(fci_panel *p, const char *label, size_t n)
{
  fci_series *s = fc_realloc(p->s, (size_t)(p->ns + 1) * sizeof *s);
  if (!s) return NULL;
  p->s = s;
  s = &p->s[p->ns];
  memset(s, 0, sizeof *s);
  snprintf(s->label, sizeof s->label, "%s", label);
  size_t m = n ? n : 1;
  if (!(s->x = fc_calloc(m, sizeof *s->x)) || !(s->y = fc_calloc(m, sizeof *s->y))) {
    fc_free(s->x);
    return NULL;
  }
  s->colour = p->ns % FCI_NPALETTE;
  s->dash = (p->ns / FCI_NPALETTE) % 3;
  p->ns++;
  return s;
}

/* Spans closer than merge_gap are joined: the shading is drawn at pixel resolution, and a
 * chattering valve would otherwise add one rectangle per switch. */
int fci_shade_add(fci_shade *s, double x0, double x1, double merge_gap)
{
  if (s->n > 0 && x0 - s->span[s->n - 1].x1 <= merge_gap) {
    if (x1 > s->span[s->n - 1].x1) s->span[s->n - 1].x1 = x1;
    return FC_OK;
  }
  if (s->n == s->cap) {
    size_t cap = s->cap ? 2 * s->cap : 64;
    fci_span *sp = fc_realloc(s->span, cap * sizeof *sp);
    if (!sp) return FC_ENOMEM;
    s->span = sp;
    s->cap = cap;
  }
  s->span[s->n].x0 = x0;
  s->span[s->n++].x1 = x1;
  return FC_OK;
}

void fci_fig_free(fci_figure *fig)
{
  if (!fig) return;
  for (int i = 0; i < fig->np; i++) {
    fci_panel *p = &fig->p[i];
    for (int k = 0; k < p->ns; k++) {
      fc_free(p->s[k].x);
      fc_free(p->s[k].y);
      fc_free(p->s[k].y2);
    }
    fc_free(p->s);
    fc_free(p->fail);
  }
  fc_free(fig->p);
  for (int i = 0; i < fig->nShade; i++) fc_free(fig->shade[i].span);
  fc_free(fig->shade);
  memset(fig, 0, sizeof *fig);
}

const char *fci_xml_escape(const char *s, char *buf, size_t n)
{
  size_t w = 0;
  for (; *s && w + 7 < n; s++) {
    const char *rep = *s == '&' ? "&amp;" : *s == '<' ? "&lt;" : *s == '>' ? "&gt;"
                    : *s == '"' ? "&quot;" : NULL;
    if (rep) {
      memcpy(buf + w, rep, strlen(rep));
      w += strlen(rep);
    } else if ((unsigned char)*s >= 0x20 || *s == '\t') {
      buf[w++] = *s;
    }
  }
  buf[w] = '\0';
  return buf;
}

const char *fci_unit_pretty(const char *u, char *buf, size_t n)
{
  size_t w = 0;
  for (const char *c = u; *c && w + 3 < n; c++) {
    int start = c == u || strchr("/(*. ", c[-1]);
    if (*c == 'u' && start && ((c[1] >= 'A' && c[1] <= 'Z') || (c[1] >= 'a' && c[1] <= 'z'))) {
      buf[w++] = '\xc2';
      buf[w++] = '\xb5';
    } else {
      buf[w++] = *c;
    }
  }
  buf[w] = '\0';
  return buf;
}
