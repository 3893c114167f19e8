#include "svg_plot.hpp"

#include <cmath>
#include <sstream>

#include "svg_palette.hpp"
#include "svg_text.hpp"

namespace pw {

namespace {

constexpr double kLeft = 64.0, kRight = 16.0, kTop = 30.0, kBottom = 46.0;
constexpr double kTickFont = 11.0, kLabelFont = 12.0, kTitleFont = 13.5, kNoteFont = 10.5;
constexpr double kLegendRow = 18.0;

std::string attr(const char* name, const std::string& value) { return std::string(" ") + name + "=\"" + xml_escape(value) + "\""; }
std::string attr(const char* name, double value) { return std::string(" ") + name + "=\"" + svg_coord(value) + "\""; }

std::string stroke_attrs(const Style& s) {
  std::string a = attr("stroke", s.stroke) + attr("stroke-width", s.width);
  if (!s.dash.empty()) a += attr("stroke-dasharray", s.dash);
  if (s.opacity < 1.0) a += attr("stroke-opacity", s.opacity);
  return a;
}

std::string text_el(double x, double y, const std::string& text, double size, const std::string& colour,
                    const std::string& anchor, const std::string& extra = "") {
  return "<text" + attr("x", x) + attr("y", y) + attr("font-size", size) + attr("fill", colour) +
         attr("text-anchor", anchor) + extra + ">" + xml_escape(text) + "</text>\n";
}

bool overlaps(const Box& a, const Box& b) { return a.x0 < b.x1 && b.x0 < a.x1 && a.y0 < b.y1 && b.y0 < a.y1; }

// Mapped points with sub-pixel steps thinned out (a non-finite point is kept: it breaks the line).
std::vector<Pt> mapped(const Axis& ax, const Axis& ay, const std::vector<double>& xs, const std::vector<double>& ys) {
  std::vector<Pt> pts;
  const size_t n = std::min(xs.size(), ys.size());
  pts.reserve(n);
  for (size_t i = 0; i < n; ++i) {
    const Pt p{ax.map(xs[i]), ay.map(ys[i])};
    const bool finite = std::isfinite(p.x) && std::isfinite(p.y);
    if (finite && !pts.empty() && i + 1 < n) {
      const Pt& q = pts.back();
      if (std::isfinite(q.x) && std::isfinite(q.y) && std::abs(p.x - q.x) < 0.35 && std::abs(p.y - q.y) < 0.35) continue;
    }
    // Far-away finite points are pulled in (keeping the direction) so the clipper works with sane numbers.
    Pt c = p;
    if (finite) {
      c.x = std::max(-1e7, std::min(1e7, c.x));
      c.y = std::max(-1e7, std::min(1e7, c.y));
    }
    pts.push_back(c);
  }
  return pts;
}

}  // namespace

double text_width(const std::string& text, double size) {
  int chars = 0;
  for (unsigned char c : text)
    if ((c & 0xC0) != 0x80) ++chars;  // count UTF-8 code points
  return 0.56 * size * chars;
}

std::string marker_path(Marker m, double cx, double cy, double size) {
  const double r = 0.5 * size;
  auto P = [](double x, double y) { return svg_coord(x) + " " + svg_coord(y); };
  switch (m) {
    case Marker::Cross:
      return "M" + P(cx - r, cy - r) + " L" + P(cx + r, cy + r) + " M" + P(cx - r, cy + r) + " L" + P(cx + r, cy - r);
    case Marker::Circle:
    case Marker::Dot:
      return "M" + P(cx - r, cy) + " A" + svg_coord(r) + " " + svg_coord(r) + " 0 1 0 " + P(cx + r, cy) + " A" +
             svg_coord(r) + " " + svg_coord(r) + " 0 1 0 " + P(cx - r, cy) + " Z";
    case Marker::Square:
      return "M" + P(cx - r, cy - r) + " L" + P(cx + r, cy - r) + " L" + P(cx + r, cy + r) + " L" + P(cx - r, cy + r) + " Z";
    case Marker::Diamond:
      return "M" + P(cx, cy - r) + " L" + P(cx + r, cy) + " L" + P(cx, cy + r) + " L" + P(cx - r, cy) + " Z";
  }
  return "";
}

Plot::Plot(double width, double height, std::string title) : width_(width), height_(height), title_(std::move(title)) {}

Box Plot::area() const { return {kLeft, kTop, width_ - kRight, height_ - kBottom}; }

void Plot::equal_aspect() {
  if (x.log || y.log) return;
  const Box b = area();
  const double wx = x.hi - x.lo, wy = y.hi - y.lo;
  if (!(wx > 0.0) || !(wy > 0.0)) return;
  const double ux = wx / (b.x1 - b.x0), uy = wy / (b.y1 - b.y0);  // data units per pixel
  if (ux > uy) {
    const double c = 0.5 * (y.lo + y.hi), half = 0.5 * ux * (b.y1 - b.y0);
    y.lo = c - half;
    y.hi = c + half;
  } else {
    const double c = 0.5 * (x.lo + x.hi), half = 0.5 * uy * (b.x1 - b.x0);
    x.lo = c - half;
    x.hi = c + half;
  }
}

void Plot::add_legend(const std::string& label, const std::string& kind, const Style& style, Marker m) {
  if (label.empty()) return;
  for (const LegendEntry& e : legend_)
    if (e.label == label) return;
  legend_.push_back({label, kind, style, m});
}

Plot::Element& Plot::add_element(int layer, const char* kind, std::vector<double> xs, std::vector<double> ys,
                                 const Style& style) {
  Element e;
  e.layer = layer;
  e.kind = kind;
  e.xs = std::move(xs);
  e.ys = std::move(ys);
  e.style = style;
  elements_.push_back(std::move(e));
  return elements_.back();
}

void Plot::line(const std::vector<double>& xs, const std::vector<double>& ys, const Style& style, const std::string& legend) {
  add_element(2, "line", xs, ys, style);
  add_legend(legend, "line", style);
}

void Plot::markers(const std::vector<double>& xs, const std::vector<double>& ys, Marker shape, double size,
                   const Style& style, const std::string& legend) {
  Element& e = add_element(3, "markers", xs, ys, style);
  e.marker = shape;
  e.size = size;
  add_legend(legend, "markers", style, shape);
}

void Plot::fill(const std::vector<double>& xs, const std::vector<double>& ys, const Style& style, const std::string& legend) {
  add_element(0, "fill", xs, ys, style);
  add_legend(legend, "fill", style);
}

void Plot::rects(const std::vector<std::vector<double>>& boxes, const Style& style, const std::string& legend) {
  std::vector<double> xs, ys;
  for (const auto& b : boxes) {
    if (b.size() != 4) continue;
    xs.push_back(b[0]);
    xs.push_back(b[1]);
    ys.push_back(b[2]);
    ys.push_back(b[3]);
  }
  add_element(0, "rects", std::move(xs), std::move(ys), style);
  add_legend(legend, "fill", style);
}

void Plot::hline(double yv, const Style& style, const std::string& note, const std::string& legend, double from, double to) {
  add_element(1, "hline", {from, to}, {yv}, style).text = note;
  add_legend(legend, "line", style);
}

void Plot::vline(double xv, const Style& style, const std::string& note, const std::string& legend, bool note_at_bottom) {
  Element& e = add_element(1, "vline", {xv}, {}, style);
  e.text = note;
  e.note_bottom = note_at_bottom;
  add_legend(legend, "line", style);
}

void Plot::note(double xv, double yv, const std::string& text, const std::string& colour, double dx, double dy,
                const std::string& anchor, bool optional) {
  Element& e = add_element(4, "note", {xv}, {yv}, Style{});
  e.style.stroke = colour;
  e.text = text;
  e.dx = dx;
  e.dy = dy;
  e.anchor = anchor;
  e.optional = optional;
}

std::string Plot::svg() const {
  const Box b = area();
  Axis ax = x, ay = y;
  ax.p0 = b.x0;
  ax.p1 = b.x1;
  ay.p0 = b.y1;
  ay.p1 = b.y0;
  ax.target_ticks = std::max(3, static_cast<int>((b.x1 - b.x0) / 80.0));
  if (!ax.fixed_ticks.empty()) {  // fixed ticks label up to 2 * target values: keep the labels apart
    double w = 0.0;
    for (double v : ax.fixed_ticks) w = std::max(w, text_width(format_number(v, 4), kTickFont));
    ax.target_ticks = std::max(1, std::min(ax.target_ticks, static_cast<int>((b.x1 - b.x0) / (2.0 * (w + 10.0)))));
  }
  ay.target_ticks = std::max(3, static_cast<int>((b.y1 - b.y0) / 45.0));

  // Legend layout: rows below the x-axis label.
  struct Placed { const LegendEntry* e; double x, y; };
  std::vector<Placed> placed;
  double lx = b.x0, ly = height_ + 6.0;
  for (const LegendEntry& e : legend_) {
    const double w = 26.0 + text_width(e.label, kTickFont) + 18.0;
    if (lx + w > width_ - 8.0 && lx > b.x0) {
      lx = b.x0;
      ly += kLegendRow;
    }
    placed.push_back({&e, lx, ly});
    lx += w;
  }
  const double total_h = legend_.empty() ? height_ : ly + kLegendRow;

  std::ostringstream o;
  o << "<svg xmlns=\"http://www.w3.org/2000/svg\" class=\"pw-plot\"" << attr("viewBox", "0 0 " + svg_coord(width_) + " " + svg_coord(total_h))
    << attr("width", width_) << attr("height", total_h)
    << " font-family=\"DejaVu Sans, Liberation Sans, Helvetica Neue, Arial, sans-serif\" role=\"img\"" << attr("aria-label", title_) << ">\n";
  o << "<title>" << xml_escape(title_) << "</title>\n";
  o << "<rect" << attr("x", b.x0) << attr("y", b.y0) << attr("width", b.x1 - b.x0) << attr("height", b.y1 - b.y0)
    << attr("fill", colour::kPaper) << "/>\n";

  // Grid.
  const std::vector<Tick> xt = ax.ticks(), yt = ay.ticks();
  std::string grid_major, grid_minor;
  for (const Tick& t : xt) {
    const double px = ax.map(t.value);
    if (!std::isfinite(px)) continue;
    (t.major ? grid_major : grid_minor) += "M" + svg_coord(px) + " " + svg_coord(b.y0) + " V" + svg_coord(b.y1) + " ";
  }
  for (const Tick& t : yt) {
    const double py = ay.map(t.value);
    if (!std::isfinite(py)) continue;
    (t.major ? grid_major : grid_minor) += "M" + svg_coord(b.x0) + " " + svg_coord(py) + " H" + svg_coord(b.x1) + " ";
  }
  if (!grid_minor.empty()) o << "<path class=\"pw-grid\" fill=\"none\" stroke=\"#eff0ec\" stroke-width=\"0.8\" d=\"" << grid_minor << "\"/>\n";
  if (!grid_major.empty()) o << "<path class=\"pw-grid\" fill=\"none\"" << attr("stroke", colour::kGrid) << " stroke-width=\"1\" d=\"" << grid_major << "\"/>\n";
  std::string zero;
  if (!ax.log && ax.lo < 0.0 && ax.hi > 0.0) zero += "M" + svg_coord(ax.map(0.0)) + " " + svg_coord(b.y0) + " V" + svg_coord(b.y1) + " ";
  if (!ay.log && ay.lo < 0.0 && ay.hi > 0.0) zero += "M" + svg_coord(b.x0) + " " + svg_coord(ay.map(0.0)) + " H" + svg_coord(b.x1) + " ";
  if (!zero.empty()) o << "<path class=\"pw-grid\" fill=\"none\" stroke=\"#b9beb6\" stroke-width=\"1\" d=\"" << zero << "\"/>\n";

  // Data, clipped twice: analytically, and by a nested viewport as a guard for stroke ends.
  o << "<svg" << attr("x", b.x0) << attr("y", b.y0) << attr("width", b.x1 - b.x0) << attr("height", b.y1 - b.y0)
    << attr("viewBox", svg_coord(b.x0) + " " + svg_coord(b.y0) + " " + svg_coord(b.x1 - b.x0) + " " + svg_coord(b.y1 - b.y0))
    << " overflow=\"hidden\">\n";
  std::vector<Box> taken;
  std::string notes;
  auto place_note = [&](double px, double py, const std::string& text, const std::string& colour, const std::string& anchor,
                        bool optional = false) {
    const double w = text_width(text, kNoteFont);
    std::string anchor_used = anchor;
    if (anchor == "start" && px + w > b.x1) {  // flip to the left of its point rather than run off the plot
      anchor_used = "end";
      px -= 10.0;
    } else if (anchor == "end" && px - w < b.x0) {
      anchor_used = "start";
      px += 10.0;
    }
    for (double shift : {0.0, 12.0, -12.0, 24.0, -24.0, 36.0}) {
      const double yy = py + shift;
      const double x0 = anchor_used == "end" ? px - w : (anchor_used == "middle" ? px - 0.5 * w : px);
      const Box box{x0, yy - kNoteFont, x0 + w, yy + 2.0};
      bool clash = box.y0 < b.y0 - 2 || box.y1 > b.y1 + 2;
      for (const Box& t : taken) clash = clash || overlaps(box, t);
      if (clash && optional && shift == 36.0) return;
      if (!clash || shift == 36.0) {
        taken.push_back(box);
        notes += text_el(px, yy, text, kNoteFont, colour, anchor_used, " class=\"pw-note\" paint-order=\"stroke\" stroke=\"#fcfcfa\" stroke-width=\"3\"");
        return;
      }
    }
  };
  for (int layer = 0; layer <= 4; ++layer) {
    for (const Element& e : elements_) {
      if (e.layer != layer) continue;
      if (e.kind == "line") {
        const std::string d = path_data(clip_polyline(mapped(ax, ay, e.xs, e.ys), b));
        if (d.empty()) continue;
        o << "<path class=\"pw-data\" fill=\"none\" stroke-linejoin=\"round\"" << stroke_attrs(e.style) << attr("d", d) << "/>\n";
      } else if (e.kind == "fill") {
        std::vector<Pt> poly = mapped(ax, ay, e.xs, e.ys);
        const std::vector<Pt> c = clip_polygon(poly, b);
        if (c.empty()) continue;
        o << "<path class=\"pw-data pw-fill\"" << attr("fill", e.style.fill) << attr("fill-opacity", e.style.opacity)
          << (e.style.width > 0.0 ? stroke_attrs(e.style) : std::string(" stroke=\"none\"")) << attr("d", path_data({c}, true)) << "/>\n";
      } else if (e.kind == "rects") {
        std::vector<std::vector<Pt>> pieces;
        for (size_t i = 0; i + 1 < e.xs.size(); i += 2) {
          const double x0 = ax.map(e.xs[i]), x1 = ax.map(e.xs[i + 1]), y0 = ay.map(e.ys[i]), y1 = ay.map(e.ys[i + 1]);
          std::vector<Pt> c = clip_polygon({{x0, y0}, {x1, y0}, {x1, y1}, {x0, y1}}, b);
          if (!c.empty()) pieces.push_back(std::move(c));
        }
        if (pieces.empty()) continue;
        o << "<path class=\"pw-data pw-fill\"" << attr("fill", e.style.fill) << attr("fill-opacity", e.style.opacity)
          << (e.style.width > 0.0 ? stroke_attrs(e.style) : std::string(" stroke=\"none\"")) << attr("d", path_data(pieces, true)) << "/>\n";
      } else if (e.kind == "markers") {
        std::string d;
        for (size_t i = 0; i < std::min(e.xs.size(), e.ys.size()); ++i) {
          const Pt p{ax.map(e.xs[i]), ay.map(e.ys[i])};
          if (!std::isfinite(p.x) || !std::isfinite(p.y) || !b.contains(p)) continue;
          d += (d.empty() ? "" : " ") + marker_path(e.marker, p.x, p.y, e.size);
          const double r = 0.5 * e.size;
          taken.push_back({p.x - r, p.y - r, p.x + r, p.y + r});  // notes keep clear of markers
        }
        if (d.empty()) continue;
        const bool solid = e.marker == Marker::Dot || e.style.fill != "none";
        o << "<path class=\"pw-data pw-markers\"" << attr("fill", solid ? (e.style.fill != "none" ? e.style.fill : e.style.stroke) : "none")
          << stroke_attrs(e.style) << attr("d", d) << "/>\n";
      } else if (e.kind == "hline" || e.kind == "vline") {
        Pt a, c;
        if (e.kind == "hline") {
          const double py = ay.map(e.ys[0]);
          const double xa = e.xs[0] <= -1e299 ? b.x0 : ax.map(e.xs[0]);
          const double xb = e.xs[1] >= 1e299 ? b.x1 : ax.map(e.xs[1]);
          a = {xa, py};
          c = {xb, py};
        } else {
          const double px = ax.map(e.xs[0]);
          a = {px, b.y1};
          c = {px, b.y0};
        }
        if (!std::isfinite(a.x) || !std::isfinite(a.y) || !std::isfinite(c.x) || !std::isfinite(c.y)) continue;
        if (!clip_segment(a, c, b)) continue;
        o << "<path class=\"pw-ref\" fill=\"none\"" << stroke_attrs(e.style) << attr("d", path_data({{a, c}})) << "/>\n";
        if (!e.text.empty()) {
          if (e.kind == "hline") {
            place_note(std::max(a.x, c.x) - 4.0, a.y - 4.0, e.text, e.style.stroke, "end");
          } else {
            const double w = text_width(e.text, kNoteFont);
            const bool right_room = a.x + 4.0 + w < b.x1;
            place_note(right_room ? a.x + 4.0 : a.x - 4.0, e.note_bottom ? b.y1 - 6.0 : b.y0 + 13.0, e.text, e.style.stroke,
                       right_room ? "start" : "end");
          }
        }
      } else if (e.kind == "note") {
        const Pt p{ax.map(e.xs[0]), ay.map(e.ys[0])};
        if (!std::isfinite(p.x) || !std::isfinite(p.y) || !b.contains(p)) continue;
        place_note(p.x + e.dx, p.y + e.dy, e.text, e.style.stroke, e.anchor, e.optional);
      }
    }
  }
  o << "</svg>\n" << notes;

  // Frame, ticks and labels.
  o << "<rect" << attr("x", b.x0) << attr("y", b.y0) << attr("width", b.x1 - b.x0) << attr("height", b.y1 - b.y0)
    << " fill=\"none\"" << attr("stroke", colour::kMuted) << " stroke-width=\"1\"/>\n";
  std::string tickmarks;
  for (const Tick& t : xt) {
    const double px = ax.map(t.value);
    if (!std::isfinite(px)) continue;
    tickmarks += "M" + svg_coord(px) + " " + svg_coord(b.y1) + " v" + (t.major ? "5 " : "3 ");
    if (!t.label.empty()) o << text_el(px, b.y1 + 17.0, t.label, kTickFont, colour::kInk, "middle");
  }
  for (const Tick& t : yt) {
    const double py = ay.map(t.value);
    if (!std::isfinite(py)) continue;
    tickmarks += "M" + svg_coord(b.x0) + " " + svg_coord(py) + " h" + (t.major ? "-5 " : "-3 ");
    if (!t.label.empty()) o << text_el(b.x0 - 8.0, py + 4.0, t.label, kTickFont, colour::kInk, "end");
  }
  if (!tickmarks.empty()) o << "<path fill=\"none\"" << attr("stroke", colour::kMuted) << " stroke-width=\"1\" d=\"" << tickmarks << "\"/>\n";
  if (!ax.label.empty()) o << text_el(0.5 * (b.x0 + b.x1), b.y1 + 36.0, ax.label, kLabelFont, colour::kInk, "middle");
  if (!ay.label.empty()) {
    const double cy = 0.5 * (b.y0 + b.y1);
    o << text_el(15.0, cy, ay.label, kLabelFont, colour::kInk, "middle",
                 " transform=\"rotate(-90 15 " + svg_coord(cy) + ")\"");
  }
  o << text_el(b.x0, 19.0, title_, kTitleFont, colour::kInk, "start", " font-weight=\"600\"");

  // Legend.
  for (const Placed& p : placed) {
    const LegendEntry& e = *p.e;
    const double cy = p.y + 7.0;
    if (e.kind == "fill") {
      o << "<rect" << attr("x", p.x) << attr("y", cy - 6.0) << " width=\"20\" height=\"12\"" << attr("fill", e.style.fill)
        << attr("fill-opacity", std::max(0.35, e.style.opacity)) << attr("stroke", e.style.stroke) << " stroke-width=\"1\"/>\n";
    } else if (e.kind == "markers") {
      const bool solid = e.marker == Marker::Dot || e.style.fill != "none";
      o << "<path" << attr("fill", solid ? (e.style.fill != "none" ? e.style.fill : e.style.stroke) : "none")
        << stroke_attrs(e.style) << attr("d", marker_path(e.marker, p.x + 10.0, cy, 8.0)) << "/>\n";
    } else {
      o << "<path fill=\"none\"" << stroke_attrs(e.style) << attr("d", "M" + svg_coord(p.x) + " " + svg_coord(cy) + " h22") << "/>\n";
    }
    o << text_el(p.x + 26.0, cy + 4.0, e.label, kTickFont, colour::kInk, "start");
  }
  o << "</svg>\n";
  return o.str();
}

}  // namespace pw
