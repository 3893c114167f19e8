// One x-y plot as a standalone <svg>: frame, grid, ticks and tick labels, axis labels with units,
// a title, clipped data lines, markers, filled regions, reference lines with notes, and a legend
// laid out below the plot area (so it never hides data). Data are given in data coordinates and
// mapped when the SVG is written; every data path is clipped to the plot area and carries the class
// "pw-data". Non-finite data never reach the SVG: they break lines and drop markers.
#pragma once

#include <string>
#include <vector>

#include "svg_axis.hpp"
#include "svg_clip.hpp"

namespace pw {

struct Style {
  std::string stroke = "#22292f";
  double width = 1.6;
  std::string dash;           // SVG stroke-dasharray, "" = solid
  std::string fill = "none";
  double opacity = 1.0;       // fill opacity for filled shapes, stroke opacity otherwise
};

enum class Marker { Cross, Circle, Dot, Square, Diamond };

class Plot {
 public:
  // Overall size of the SVG without its legend (the legend adds rows below).
  Plot(double width, double height, std::string title);

  Axis x, y;  // set lo, hi, log and label; the pixel ends are set from the layout

  // The plot area in pixels.
  Box area() const;
  // Widens the x or y range about its centre so that one data unit has the same length on both
  // axes (s-plane plots). Linear axes only.
  void equal_aspect();

  void line(const std::vector<double>& xs, const std::vector<double>& ys, const Style& style,
            const std::string& legend = "");
  void markers(const std::vector<double>& xs, const std::vector<double>& ys, Marker shape, double size,
               const Style& style, const std::string& legend = "");
  // A filled polygon in data coordinates (clipped to the plot area).
  void fill(const std::vector<double>& xs, const std::vector<double>& ys, const Style& style,
            const std::string& legend = "");
  // Axis-aligned rectangles {x0, x1, y0, y1} in data coordinates, all in one path (map cells).
  void rects(const std::vector<std::vector<double>>& boxes, const Style& style, const std::string& legend = "");
  // Reference lines across the plot area (or over [from, to] of the other axis) with a short note
  // at their end.
  void hline(double yv, const Style& style, const std::string& note = "", const std::string& legend = "",
             double from = -1e300, double to = 1e300);
  void vline(double xv, const Style& style, const std::string& note = "", const std::string& legend = "",
             bool note_at_bottom = false);
  // A note at a data point, offset by (dx, dy) pixels; dropped when the point is outside the area.
  // Notes are moved up or down to clear earlier ones; an `optional` note that cannot clear them is
  // left out.
  void note(double xv, double yv, const std::string& text, const std::string& colour, double dx = 4, double dy = -4,
            const std::string& anchor = "start", bool optional = false);

  // A legend entry for a line drawn without one (to list series in another order than drawn).
  void legend_line(const std::string& label, const Style& style) { add_legend(label, "line", style); }

  // The whole plot as one <svg> element.
  std::string svg() const;

 private:
  struct Element {
    int layer = 0;                  // 0 fills, 1 reference lines, 2 data lines, 3 markers, 4 notes
    std::string kind;               // "line", "fill", "rects", "markers", "hline", "vline", "note"
    std::vector<double> xs, ys;
    Style style;
    Marker marker = Marker::Dot;
    double size = 6.0;
    std::string text, anchor;
    double dx = 0.0, dy = 0.0;
    bool optional = false;          // notes: may be left out
    bool note_bottom = false;       // vline: note at the bottom of the area
  };
  struct LegendEntry {
    std::string label;
    std::string kind;  // "line", "fill", "markers"
    Style style;
    Marker marker = Marker::Dot;
  };
  void add_legend(const std::string& label, const std::string& kind, const Style& style, Marker m = Marker::Dot);
  // Appends an element with the fields every kind has; the caller sets the rest.
  Element& add_element(int layer, const char* kind, std::vector<double> xs, std::vector<double> ys, const Style& style);

  double width_, height_;
  std::string title_;
  std::vector<Element> elements_;
  std::vector<LegendEntry> legend_;
};

// Approximate width in pixels of `text` at font size `size` (for layout without a font engine).
double text_width(const std::string& text, double size);

// Path data of one marker centred at (cx, cy).
std::string marker_path(Marker m, double cx, double cy, double size);

}  // namespace pw
