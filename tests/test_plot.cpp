// Plots: image size and content read back from the PNG, colours, bands, histogram bins, robustness to bad
// data, nice ticks and tick labels, SVG output, atomic writes and error messages.
#include <doctest/doctest.h>

#include <cairo.h>

#include <cmath>
#include <cstdint>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <limits>
#include <random>
#include <stdexcept>
#include <string>
#include <vector>

#include "sim/report/plot.hpp"

using namespace wayward::plot;

// Fontconfig (loaded by cairo's text rendering) keeps its configuration for the life of the process, which
// LeakSanitizer reports at exit in the sanitizer build. This hook is the LeakSanitizer runtime's documented
// way to suppress known leaks; other builds never call it.
extern "C" const char* __lsan_default_suppressions() { return "leak:libfontconfig.so\n"; }

namespace {

constexpr double nan_v = std::numeric_limits<double>::quiet_NaN();
constexpr double inf_v = std::numeric_limits<double>::infinity();

struct Rgb {
    int r = 0, g = 0, b = 0;
};

struct Image {
    bool ok = false;
    int width = 0, height = 0;
    std::vector<Rgb> pixels;
    Rgb at(int x, int y) const { return pixels[static_cast<std::size_t>(y) * static_cast<std::size_t>(width) + static_cast<std::size_t>(x)]; }
};

// Reads a PNG with cairo; pixels are composited over white so that the values are plain 8-bit RGB.
Image read_png(const std::string& path) {
    Image img;
    cairo_surface_t* s = cairo_image_surface_create_from_png(path.c_str());
    if (cairo_surface_status(s) == CAIRO_STATUS_SUCCESS) {
        cairo_surface_flush(s);
        img.ok = true;
        img.width = cairo_image_surface_get_width(s);
        img.height = cairo_image_surface_get_height(s);
        const int stride = cairo_image_surface_get_stride(s);
        const unsigned char* data = cairo_image_surface_get_data(s);
        const bool has_alpha = cairo_image_surface_get_format(s) == CAIRO_FORMAT_ARGB32;
        for (int y = 0; y < img.height; ++y)
            for (int x = 0; x < img.width; ++x) {
                std::uint32_t p;
                std::memcpy(&p, data + y * stride + 4 * x, 4);
                const int a = has_alpha ? static_cast<int>(p >> 24) : 255;
                // Premultiplied colour over white.
                auto ch = [&](int shift) { return static_cast<int>((p >> shift) & 0xFF) + (255 - a); };
                img.pixels.push_back({ch(16), ch(8), ch(0)});
            }
    }
    cairo_surface_destroy(s);
    return img;
}

Rgb to_rgb(Color c) {
    return {static_cast<int>(std::lround(c.r * 255)), static_cast<int>(std::lround(c.g * 255)), static_cast<int>(std::lround(c.b * 255))};
}
// A colour at `alpha` over white, as 8-bit values.
Rgb over_white(Color c, double alpha) {
    auto ch = [&](double v) { return static_cast<int>(std::lround(255.0 * (1.0 - alpha) + 255.0 * v * alpha)); };
    return {ch(c.r), ch(c.g), ch(c.b)};
}
bool near(Rgb a, Rgb b, int tol) { return std::abs(a.r - b.r) <= tol && std::abs(a.g - b.g) <= tol && std::abs(a.b - b.b) <= tol; }

// Pixels of colour `c` (within tol) inside the rectangle (or outside it when `outside`).
long count_colour(const Image& img, Rgb c, int tol, const Rect& r, bool outside = false) {
    long n = 0;
    for (int y = 0; y < img.height; ++y)
        for (int x = 0; x < img.width; ++x) {
            const bool in = x >= r.x && x < r.x + r.w && y >= r.y && y < r.y + r.h;
            if (in != outside && near(img.at(x, y), c, tol)) ++n;
        }
    return n;
}

long count_not_white(const Image& img) {
    long n = 0;
    for (const Rgb& p : img.pixels)
        if (!near(p, Rgb{255, 255, 255}, 8)) ++n;
    return n;
}

std::string out_dir() {
    const std::string d = (std::filesystem::temp_directory_path() / "wayward-test-plot").string();
    std::filesystem::create_directories(d);
    return d;
}

std::string read_text(const std::string& path) {
    std::ifstream in(path, std::ios::binary);
    return std::string(std::istreambuf_iterator<char>(in), std::istreambuf_iterator<char>());
}

Series make_series(std::string label, std::vector<double> x, std::vector<double> y) {
    Series s;
    s.label = std::move(label);
    s.x = std::move(x);
    s.y = std::move(y);
    return s;
}

Panel sine_panel() {
    Panel p;
    p.title = "residuals";
    p.x_label = "year";
    p.y_label = "O\u2212C (arcsec)";
    Series s;
    s.label = "sine";
    for (int i = 0; i <= 200; ++i) {
        s.x.push_back(2000.0 + i * 0.1);
        s.y.push_back(std::sin(i * 0.1));
    }
    p.series.push_back(s);
    return p;
}

}  // namespace

TEST_CASE("plot: the PNG has the requested size and is not blank") {
    Figure f;
    f.title = "test figure";
    f.width = 800;
    f.height_per_panel = 300;
    f.panels = {sine_panel(), sine_panel()};
    const std::string path = out_dir() + "/size.png";
    save_png(f, path);
    const Image img = read_png(path);
    REQUIRE(img.ok);
    CHECK(img.width == 800);
    CHECK(img.height == 40 + 2 * 300);  // a 40-pixel title band, then the panels (see layout_figure)
    // Axes, grid, text and two curves: well over 2% of the pixels are not background.
    CHECK(count_not_white(img) > img.width * img.height / 50);
}

TEST_CASE("plot: a series leaves pixels of its colour inside the plot area and none outside") {
    Figure f;
    f.width = 700;
    f.height_per_panel = 360;
    Panel p;
    p.x_label = "x";
    Series s;
    s.label = "flat";
    s.x = {0.0, 1.0};
    s.y = {0.5, 0.5};
    s.color = palette(1);
    s.width = 3.0;
    p.series.push_back(s);
    Series other;  // a second curve so the range is not degenerate
    other.x = {0.0, 1.0};
    other.y = {0.0, 1.0};
    other.color = palette(0);
    p.series.push_back(other);
    p.x_range = std::make_pair(0.2, 0.8);  // narrower than the data, so the line must be clipped at the frame
    f.panels = {p};
    const std::string path = out_dir() + "/colour.png";
    save_png(f, path);
    const Image img = read_png(path);
    REQUIRE(img.ok);
    const Rect area = plot_area(f, 0);
    CHECK(area.w > 300);
    const long in = count_colour(img, to_rgb(palette(1)), 3, area);
    // A 3-pixel line across the plot: at least two full-colour rows (the legend sample alone is ~60 pixels).
    CHECK(in > static_cast<long>(area.w));
    CHECK(count_colour(img, to_rgb(palette(1)), 3, area, true) == 0);  // clipped to the plot area

    // The same figure without that series has none of its colour.
    f.panels[0].series.erase(f.panels[0].series.begin());
    save_png(f, path);
    CHECK(count_colour(read_png(path), to_rgb(palette(1)), 3, area) == 0);
}

TEST_CASE("plot: a lone point on a line series is still drawn") {
    Figure f;
    f.width = 500;
    Panel p;
    Series s = make_series("lone", {1.0, 2.0, 3.0}, {nan_v, 4.0, nan_v});  // no segment can be drawn
    s.color = palette(3);
    p.series.push_back(s);
    p.legend = false;
    f.panels = {p};
    const std::string path = out_dir() + "/lone.png";
    save_png(f, path);
    const Image img = read_png(path);
    REQUIRE(img.ok);
    CHECK(count_colour(img, to_rgb(palette(3)), 3, plot_area(f, 0)) >= 4);
}

TEST_CASE("plot: a band is drawn as a translucent fill") {
    Figure f;
    f.width = 700;
    Panel p;
    Series mid;
    mid.label = "rate";
    Band b;
    b.label = "rate";  // shares the series' colour and legend entry
    for (int i = 0; i <= 50; ++i) {
        const double x = i;
        mid.x.push_back(x);
        mid.y.push_back(0.5);
        b.x.push_back(x);
        b.lo.push_back(0.2);
        b.hi.push_back(0.8);
    }
    mid.color = palette(2);
    p.series.push_back(mid);
    p.bands.push_back(b);
    p.legend = false;
    f.panels = {p};
    const std::string path = out_dir() + "/band.png";
    save_png(f, path);
    const Image img = read_png(path);
    REQUIRE(img.ok);
    const Rect area = plot_area(f, 0);
    const Rgb fill = over_white(palette(2), b.opacity);
    const long filled = count_colour(img, fill, 2, area);
    // lo..hi is 60% of the data range, so well over a third of the plot area is band.
    CHECK(filled > static_cast<long>(area.w * area.h / 3));

    f.panels[0].bands.clear();
    save_png(f, path);
    CHECK(count_colour(read_png(path), fill, 2, area) < filled / 100);
}

TEST_CASE("plot: the legend is drawn in the corner free of data") {
    // Points fill every quarter of the plot except the bottom left; the legend must go there.
    Figure f;
    f.width = 800;
    f.height_per_panel = 400;
    Panel p;
    Series s;
    s.label = "observations";
    s.style = Style::points;
    for (int i = 0; i <= 40; ++i)
        for (int j = 0; j <= 40; ++j) {
            const double x = i / 40.0, y = j / 40.0;
            if (x < 0.5 && y < 0.5) continue;
            s.x.push_back(x);
            s.y.push_back(y);
        }
    p.series.push_back(s);
    f.panels = {p};
    const std::string path = out_dir() + "/legend.png";
    save_png(f, path);
    const Image img = read_png(path);
    REQUIRE(img.ok);
    const Rect area = plot_area(f, 0);
    // The legend box has a light grey border (0.75 grey, draw_legend in plot_legend.cpp); nothing else in the plot is that grey.
    const Rgb border{191, 191, 191};
    long n = 0;
    double sx = 0.0, sy = 0.0;
    for (int y = static_cast<int>(area.y); y < area.y + area.h; ++y)
        for (int x = static_cast<int>(area.x); x < area.x + area.w; ++x)
            if (near(img.at(x, y), border, 1)) {
                ++n;
                sx += x;
                sy += y;
            }
    REQUIRE(n > 100);
    CHECK(sx / n < area.x + area.w / 2);  // left half
    CHECK(sy / n > area.y + area.h / 2);  // bottom half

    f.panels[0].legend = false;
    save_png(f, path);
    CHECK(count_colour(read_png(path), border, 1, area) < 10);
}

TEST_CASE("plot: histogram counts, the bin edge rule and skipped values") {
    // Four bins over [0, 2]: edges 0, 0.5, 1, 1.5, 2. A value on an interior edge goes to the bin above;
    // the maximum goes to the last bin (the documented rule in plot.hpp).
    const Histogram h = bin_samples({0.0, 0.5, 1.0, 1.5, 2.0, 0.7, nan_v, inf_v, -inf_v}, 4);
    REQUIRE(h.edges.size() == 5);
    REQUIRE(h.counts.size() == 4);
    CHECK(h.edges.front() == 0.0);
    CHECK(h.edges.back() == 2.0);
    CHECK(h.counts[0] == 1.0);  // 0
    CHECK(h.counts[1] == 2.0);  // 0.5, 0.7
    CHECK(h.counts[2] == 1.0);  // 1.0
    CHECK(h.counts[3] == 2.0);  // 1.5, 2.0
    CHECK(h.non_finite == 3);
    CHECK(h.outside == 0);

    // Many random samples: the counts add up to the finite samples inside the range.
    std::mt19937_64 rng(12345);
    std::normal_distribution<double> normal(3.0, 2.0);
    std::vector<double> xs;
    for (int i = 0; i < 5000; ++i) xs.push_back(normal(rng));
    xs.push_back(nan_v);
    const Histogram g = bin_samples(xs, 37, std::make_pair(0.0, 6.0));
    double total = 0.0;
    for (double c : g.counts) total += c;
    std::size_t in_range = 0;
    for (double v : xs)
        if (v >= 0.0 && v <= 6.0) ++in_range;
    CHECK(total == static_cast<double>(in_range));
    CHECK(g.outside == 5000 - in_range);
    CHECK(g.non_finite == 1);

    // Every value lands in the bin whose edges bracket it.
    for (double v : xs) {
        if (!(v >= 0.0 && v <= 6.0)) continue;
        std::size_t i = 0;
        while (i + 1 < g.counts.size() && v >= g.edges[i + 1]) ++i;
        CHECK(v >= g.edges[i]);
    }

    // All-equal samples: the range is widened and all of them are counted.
    const Histogram e = bin_samples({5.0, 5.0, 5.0}, 4);
    CHECK(e.edges.front() < 5.0);
    CHECK(e.edges.back() > 5.0);
    double te = 0.0;
    for (double c : e.counts) te += c;
    CHECK(te == 3.0);
    // No bins asked for: one bin. No finite samples: zero counts over [0, 1].
    CHECK(bin_samples({1.0, 2.0}, 0).counts.size() == 1);
    const Histogram none = bin_samples({nan_v}, 3);
    CHECK(none.counts == std::vector<double>{0.0, 0.0, 0.0});
    CHECK(none.non_finite == 1);

    // The histogram panel is a single histogram series over the same edges.
    const Panel p = histogram({0.0, 0.5, 1.0, 1.5, 2.0}, 4, "separation (arcsec)");
    REQUIRE(p.series.size() == 1);
    CHECK(p.series[0].style == Style::histogram);
    CHECK(p.series[0].x.size() == 5);
    CHECK(p.series[0].y == std::vector<double>{1.0, 1.0, 1.0, 2.0});
    CHECK(p.x_label == "separation (arcsec)");
}

TEST_CASE("plot: empty, NaN-only, single-point, all-equal, infinite and huge data still give valid images") {
    std::vector<Panel> panels;
    panels.push_back(Panel{});  // nothing at all
    Panel nan_only;
    nan_only.series.push_back(make_series("nan", {nan_v, nan_v}, {nan_v, nan_v}));
    Band nan_band;
    nan_band.x = nan_band.lo = nan_band.hi = {nan_v};
    nan_only.bands.push_back(nan_band);
    panels.push_back(nan_only);
    Panel single;
    Series one = make_series("one", {2020.0}, {1.5});
    one.style = Style::line_points;
    single.series.push_back(one);
    panels.push_back(single);
    Panel equal;
    equal.series.push_back(make_series("equal", {1, 2, 3, 4}, {7, 7, 7, 7}));
    panels.push_back(equal);
    Panel mixed;
    Series m = make_series("mixed", {0, 1, 2, 3, inf_v, 5}, {1, nan_v, inf_v, -inf_v, 2, 3});
    m.y_err = {0.1, nan_v, 1.0, inf_v, 0.2, 0.3};
    m.style = Style::line_points;
    mixed.series.push_back(m);
    RefLine nan_line;
    nan_line.value = nan_v;
    nan_line.label = "nan line";
    mixed.lines.push_back(nan_line);
    Span from_minus_inf, from_nan;
    from_minus_inf.from = -inf_v;
    from_minus_inf.to = 1.0;
    from_nan.from = nan_v;
    from_nan.to = 2.0;
    mixed.spans.push_back(from_minus_inf);
    mixed.spans.push_back(from_nan);
    panels.push_back(mixed);
    Panel huge;
    huge.series.push_back(make_series("huge", {-1e308, 0, 1e308}, {-1.7e308, 1e-300, 1.7e308}));
    panels.push_back(huge);
    Panel log_bad;
    log_bad.log_y = true;
    Series lb = make_series("log", {0, 1, 2, 3}, {-1, 0, 1e-300, 1e300});
    lb.style = Style::step;
    log_bad.series.push_back(lb);
    panels.push_back(log_bad);
    Panel bad_range;
    bad_range.series.push_back(make_series("r", {0, 1}, {0, 1}));
    bad_range.x_range = std::make_pair(3.0, 3.0);
    bad_range.y_range = std::make_pair(nan_v, inf_v);
    panels.push_back(bad_range);
    Panel bad_text;
    bad_text.title = "bad \xff\xfe UTF-8 \xe2\x88";
    bad_text.series.push_back(make_series("ok", {0, 1}, {0, 1}));
    panels.push_back(bad_text);
    panels.push_back(histogram({nan_v, inf_v}, 10, "nothing finite"));

    const std::string dir = out_dir();
    int k = 0;
    for (const Panel& p : panels) {
        CAPTURE(k);
        Figure f;
        f.width = 500;
        f.height_per_panel = 260;
        f.panels = {p};
        const std::string path = dir + "/bad-" + std::to_string(k++) + ".png";
        REQUIRE_NOTHROW(save_png(f, path));
        const Image img = read_png(path);
        REQUIRE(img.ok);
        CHECK(img.width == 500);
        CHECK(img.height == 260);
        CHECK(count_not_white(img) > 500);  // at least the frame and tick labels
        REQUIRE_NOTHROW(save_svg(f, dir + "/bad.svg"));
    }

    // A figure with no panels, and bar charts with no categories or bad values.
    Figure empty;
    REQUIRE_NOTHROW(save_png(empty, dir + "/empty.png"));
    CHECK(read_png(dir + "/empty.png").ok);
    Bars none;
    REQUIRE_NOTHROW(save_png(none, dir + "/bars-empty.png"));
    CHECK(read_png(dir + "/bars-empty.png").ok);
    Bars bad;
    bad.categories = {"a", "b", "c"};
    bad.values = {{nan_v, inf_v}, {1.0, -2.0, 3.0, 4.0}};
    bad.log_y = true;
    REQUIRE_NOTHROW(save_png(bad, dir + "/bars-bad.png"));
    CHECK(read_png(dir + "/bars-bad.png").ok);
}

TEST_CASE("plot: nice ticks are 1, 2 or 5 times a power of ten and cover the range") {
    // Worked by hand from Heckbert's rules (Graphics Gems, 1990): [0, 1] with 6 ticks -> step 0.2.
    const Ticks unit = nice_ticks(0.0, 1.0, 6);
    CHECK(unit.step == doctest::Approx(0.2));
    REQUIRE(unit.values.size() == 6);
    CHECK(unit.values.front() == 0.0);
    CHECK(unit.values.back() == doctest::Approx(1.0));
    CHECK(nice_number(0.23, true) == doctest::Approx(0.2));
    CHECK(nice_number(3.2, false) == doctest::Approx(5.0));
    CHECK(nice_number(7.5, true) == doctest::Approx(10.0));

    std::mt19937_64 rng(7);
    std::uniform_real_distribution<double> exponent(-12.0, 12.0), unit_d(-1.0, 1.0);
    std::vector<std::pair<double, double>> ranges = {{0, 1}, {-0.3, 97.2}, {2001, 2023}, {1e-9, 3e-9}, {-5, -4.99},
                                                     {1e15, 1e15 + 10}, {0.1, 0.35}, {-1e300, 1e300}};
    for (int i = 0; i < 300; ++i) {
        const double scale = std::pow(10.0, exponent(rng));
        double a = unit_d(rng) * scale, b = unit_d(rng) * scale;
        if (a > b) std::swap(a, b);
        ranges.push_back({a, b});
    }
    for (const auto& [lo, hi] : ranges)
        for (int target : {2, 4, 6, 10}) {
            CAPTURE(lo);
            CAPTURE(hi);
            CAPTURE(target);
            const Ticks t = nice_ticks(lo, hi, target);
            REQUIRE(t.step > 0.0);
            const double mant = t.step / std::pow(10.0, std::floor(std::log10(t.step) + 1e-9));
            const bool round_step = std::abs(mant - 1) < 1e-9 || std::abs(mant - 2) < 1e-9 || std::abs(mant - 5) < 1e-9;
            CHECK(round_step);
            REQUIRE(t.values.size() >= 2);
            CHECK(static_cast<int>(t.values.size()) <= 2 * target + 1);
            const double tol = t.step * 1e-6;
            CHECK(t.values.front() >= t.lo - tol);
            CHECK(t.values.back() <= t.hi + tol);
            CHECK(t.values.front() - t.lo < t.step + tol);  // no gap larger than a step at either end
            CHECK(t.hi - t.values.back() < t.step + tol);
            for (std::size_t k = 0; k < t.values.size(); ++k) {
                const double q = t.values[k] / t.step;
                CHECK(std::abs(q - std::round(q)) < 1e-6);
                if (k > 0) CHECK(t.values[k] - t.values[k - 1] == doctest::Approx(t.step));
            }
        }
    // Degenerate input still gives an ordered range with ticks.
    for (const auto& [lo, hi] : std::vector<std::pair<double, double>>{{5, 5}, {0, 0}, {nan_v, nan_v}, {-inf_v, inf_v}, {3, nan_v}}) {
        const Ticks t = nice_ticks(lo, hi);
        CHECK(t.hi > t.lo);
        CHECK(std::isfinite(t.step));
        CHECK(t.values.size() >= 2);
    }
}

TEST_CASE("plot: tick labels") {
    CHECK(format_tick(0.1 + 0.2, 0.1) == "0.3");
    CHECK(format_tick(-2.0, 1.0) == "\u22122");  // a true minus sign
    CHECK(format_tick(2020.0, 5.0) == "2020");
    CHECK(format_tick(1e-17, 0.2) == "0.0");  // zero like its neighbours, not "1e-17" or "-0.0"
    CHECK(format_tick(0.0, 1e-5) == "0");
    CHECK(format_tick(2.5e6, 5e5) == "2.5e6");
    CHECK(format_tick(3e-5, 1e-5) == "3e\u22125");
    CHECK(format_tick(0.25, 0.05) == "0.25");
    CHECK(format_tick(nan_v, 1.0).empty());
}

TEST_CASE("plot: spans where a curve is at or below a limit") {
    std::vector<double> x, y;
    for (int i = 0; i <= 10; ++i) {
        x.push_back(i);
        y.push_back(std::abs(i - 5.0));
    }
    // |x - 5| <= 2 exactly on [3, 7].
    const std::vector<Span> s = spans_where_below(x, y, 2.0, palette(3), "inside");
    REQUIRE(s.size() == 1);
    CHECK(s[0].from == doctest::Approx(3.0));
    CHECK(s[0].to == doctest::Approx(7.0));
    CHECK(s[0].label == "inside");
    // Crossing between samples is interpolated: |x - 5| <= 2.5 on [2.5, 7.5].
    const std::vector<Span> h = spans_where_below(x, y, 2.5);
    REQUIRE(h.size() == 1);
    CHECK(h[0].from == doctest::Approx(2.5));
    CHECK(h[0].to == doctest::Approx(7.5));
    // A NaN in the middle splits the run.
    y[5] = nan_v;
    const std::vector<Span> split = spans_where_below(x, y, 2.0);
    REQUIRE(split.size() == 2);
    CHECK(split[0].from == doctest::Approx(3.0));
    CHECK(split[0].to == doctest::Approx(4.0));
    CHECK(split[1].from == doctest::Approx(6.0));
    CHECK(split[1].to == doctest::Approx(7.0));
    CHECK(spans_where_below(x, y, -1.0).empty());
    CHECK(spans_where_below({}, {}, 1.0).empty());
}

TEST_CASE("plot: the font covers the labels we use and invalid text is caught") {
    CHECK(font_has_glyphs("O\u2212C"));
    CHECK(font_has_glyphs("\u03BB\u00B7cos \u03B2"));
    CHECK(font_has_glyphs("10\u207B\u00B3 \u00D7 \u2033"));
    CHECK_FALSE(font_has_glyphs("\xff"));
    CHECK_FALSE(font_has_glyphs("\u6F22"));  // a CJK character: not in DejaVu Sans (from memory)
}

TEST_CASE("plot: SVG output is an SVG document") {
    Figure f;
    f.panels = {sine_panel()};
    const std::string path = out_dir() + "/fig.svg";
    save_svg(f, path);
    const std::string text = read_text(path);
    const bool starts = text.rfind("<?xml", 0) == 0 || text.rfind("<svg", 0) == 0;
    CHECK(starts);
    CHECK(text.find("</svg>") != std::string::npos);

    Bars b;
    b.categories = {"timing", "astrometry"};
    b.values = {{1.0, 2.0}};
    save_svg(b, out_dir() + "/bars.svg");
    const std::string bt = read_text(out_dir() + "/bars.svg");
    CHECK((bt.rfind("<?xml", 0) == 0 || bt.rfind("<svg", 0) == 0));
    CHECK(bt.find("</svg>") != std::string::npos);
}

TEST_CASE("plot: bar areas follow the values") {
    Bars b;
    b.title = "budget";
    b.categories = {"a", "b", "c"};
    b.group_labels = {"median", "90th percentile"};
    b.values = {{1.0, 1.0, 1.0}, {3.0, 3.0, 3.0}};
    b.value_labels = false;
    b.width = 600;
    b.height = 400;
    const std::string path = out_dir() + "/bars.png";
    save_png(b, path);
    const Image img = read_png(path);
    REQUIRE(img.ok);
    CHECK(img.width == 600);
    CHECK(img.height == 400);
    const Rect all{0, 0, 600, 400};
    const double n0 = static_cast<double>(count_colour(img, to_rgb(palette(0)), 2, all));
    const double n1 = static_cast<double>(count_colour(img, to_rgb(palette(1)), 2, all));
    REQUIRE(n0 > 100);
    // Equal widths, heights 1 : 3 from a zero baseline (the legend samples add a little to both).
    CHECK(n1 / n0 > 2.5);
    CHECK(n1 / n0 < 3.5);
}

TEST_CASE("plot: stacked panels share the plot area's left edge and width") {
    Figure f;
    Panel a = sine_panel();
    Panel b = sine_panel();
    for (double& v : b.series[0].y) v *= 123456.0;  // much wider tick labels
    f.panels = {a, b};
    f.share_x = true;
    const Rect ra = plot_area(f, 0), rb = plot_area(f, 1);
    CHECK(ra.x == rb.x);
    CHECK(ra.w == rb.w);
    CHECK(rb.y >= ra.y + ra.h);
    CHECK_THROWS_AS(plot_area(f, 2), std::out_of_range);
}

TEST_CASE("plot: writes are atomic and failures name the path") {
    const std::string dir = out_dir() + "/atomic";
    std::filesystem::remove_all(dir);
    std::filesystem::create_directories(dir);
    Figure f;
    f.panels = {sine_panel()};
    save_png(f, dir + "/a.png");
    save_svg(f, dir + "/a.svg");
    int files = 0;
    for (const auto& e : std::filesystem::directory_iterator(dir)) {
        ++files;
        CHECK(e.path().filename().string().find("tmp-") == std::string::npos);
    }
    CHECK(files == 2);

    const std::string bad = "/nonexistent-wayward-dir/plot.png";
    try {
        save_png(f, bad);
        FAIL("no exception");
    } catch (const std::runtime_error& e) {
        CHECK(std::string(e.what()).find(bad) != std::string::npos);
    }
    Figure zero = f;
    zero.width = 0;
    CHECK_THROWS_AS(save_png(zero, dir + "/z.png"), std::runtime_error);
    Bars huge;
    huge.height = 100000;
    CHECK_THROWS_AS(save_svg(huge, dir + "/z.svg"), std::runtime_error);
}

TEST_CASE("plot: a span of a single epoch (zero width in data) is still shaded") {
    Figure f;
    f.width = 600;
    Panel p;
    Series s = make_series("curve", {0.0, 10.0}, {1.0, 2.0});
    s.color = palette(0);
    p.series.push_back(s);
    p.spans.push_back(Span{5.0, 5.0, true, palette(2), "inside", 1.0});  // one epoch inside, fully opaque
    p.legend = false;
    f.panels = {p};
    const std::string path = out_dir() + "/single-span.png";
    save_png(f, path);
    const Image img = read_png(path);
    REQUIRE(img.ok);
    const Rect area = plot_area(f, 0);
    // A strip at least 3 px wide (2 whole columns in any sub-pixel position) and the plot's full height (grid lines drawn over it may take a few pixels).
    CHECK(count_colour(img, to_rgb(palette(2)), 3, area) >= static_cast<long>(1.5 * area.h));
}

TEST_CASE("plot: a log x axis places 10 a third of the way from 1 to 1000") {
    Figure f;
    f.width = 700;
    Panel p;
    p.log_x = true;
    p.x_range = std::make_pair(1.0, 1000.0);
    Series s = make_series("curve", {1.0, 1000.0}, {0.0, 1.0});
    s.color = palette(0);
    p.series.push_back(s);
    p.lines.push_back({10.0, false, "", palette(2), false});  // a solid vertical line at x = 10
    p.legend = false;
    f.panels = {p};
    const std::string path = out_dir() + "/log-x.png";
    save_png(f, path);
    const Image img = read_png(path);
    REQUIRE(img.ok);
    const Rect area = plot_area(f, 0);
    // log10(10) is a third of the way from log10(1) to log10(1000); on a linear axis 10 would sit at 0.9%.
    const double x_expected = area.x + area.w / 3.0;
    // Along a row near the top (clear of the curve), the most bluish-green pixel is the line's.
    const int row = static_cast<int>(area.y + 0.1 * area.h);
    int best_x = -1, best = -1000;
    for (int x = static_cast<int>(area.x) + 2; x < static_cast<int>(area.x + area.w) - 2; ++x) {
        const Rgb c = img.at(x, row);
        if (c.g - c.r > best) { best = c.g - c.r; best_x = x; }
    }
    CHECK(best > 60);
    CHECK(std::abs(best_x - x_expected) <= 3.0);
}
