// Rendering the plots to PNG or SVG with cairo and writing the files atomically; the public entry points
// (save_png, save_svg, plot_area). Part of the plot module (plot.hpp).
#include <atomic>
#include <filesystem>
#include <stdexcept>

#include <cairo-svg.h>

#include "sim/io/fileio.hpp"
#include "sim/report/plot_internal.hpp"

namespace wayward::plot {

namespace detail {

namespace {

constexpr int min_size = 16, max_size = 32767;  // cairo image surfaces are limited to 32767 pixels

cairo_status_t append_bytes(void* closure, const unsigned char* data, unsigned int length) {
    static_cast<std::string*>(closure)->append(reinterpret_cast<const char*>(data), length);
    return CAIRO_STATUS_SUCCESS;
}

void check_size(double w, double h, const std::string& path) {
    if (!(w >= min_size && w <= max_size && h >= min_size && h <= max_size))
        throw std::runtime_error("cannot write " + path + ": image size " + std::to_string(static_cast<long long>(w)) + "x" +
                                 std::to_string(static_cast<long long>(h)) + " is outside " + std::to_string(min_size) +
                                 ".." + std::to_string(max_size) + " pixels");
}

void check_status(cairo_status_t st, const std::string& path) {
    if (st != CAIRO_STATUS_SUCCESS) throw std::runtime_error("cannot write " + path + ": " + cairo_status_to_string(st));
}

enum class Format { png, svg };

// Renders with `draw(cr)` onto a width x height surface and returns the encoded file.
template <typename Draw>
std::string render(Format fmt, int width, int height, const std::string& path, Draw draw) {
    std::string bytes;
    SurfacePtr surface(fmt == Format::png ? cairo_image_surface_create(CAIRO_FORMAT_ARGB32, width, height)
                                          : cairo_svg_surface_create_for_stream(append_bytes, &bytes, width, height));
    check_status(cairo_surface_status(surface.get()), path);
    if (fmt == Format::svg) cairo_svg_surface_set_document_unit(surface.get(), CAIRO_SVG_UNIT_PX);
    {
        ContextPtr cr(cairo_create(surface.get()));
        draw(cr.get());
        check_status(cairo_status(cr.get()), path);
    }
    if (fmt == Format::png) check_status(cairo_surface_write_to_png_stream(surface.get(), append_bytes, &bytes), path);
    cairo_surface_finish(surface.get());
    check_status(cairo_surface_status(surface.get()), path);
    return bytes;
}

// The encoded bytes go to a temporary file beside `path` which is then renamed over it (fileio.hpp).
void save_figure(const Figure& f, const std::string& path, Format fmt) {
    ContextPtr mc = measuring_context();
    check_size(f.width, std::max(0.0, (f.title.empty() ? 0.0 : 40.0) + static_cast<double>(f.height_per_panel) *
                                                                          static_cast<double>(panels_of(f).size())),
               path);
    const FigureLayout L = layout_figure(mc.get(), f);
    write_file_atomic(path, render(fmt, L.width, L.height, path, [&](cairo_t* cr) { draw_figure(cr, f, L); }));
}

void save_bars(const Bars& b, const std::string& path, Format fmt) {
    check_size(b.width, b.height, path);
    write_file_atomic(path, render(fmt, b.width, b.height, path, [&](cairo_t* cr) { draw_bars(cr, b); }));
}

}  // namespace

// A scratch context for measuring text before the real surface exists (same font, same hinting as PNG).
// The context keeps its own reference to the surface.
ContextPtr measuring_context() {
    SurfacePtr scratch(cairo_image_surface_create(CAIRO_FORMAT_ARGB32, 1, 1));
    return ContextPtr(cairo_create(scratch.get()));
}

}  // namespace detail

using namespace detail;

Rect plot_area(const Figure& figure, std::size_t index) {
    ContextPtr mc = measuring_context();
    const FigureLayout L = layout_figure(mc.get(), figure);
    if (index >= L.panels.size()) throw std::out_of_range("plot_area: no panel " + std::to_string(index));
    return L.panels[index].plot;
}

namespace {
std::atomic<bool> svg_copies{false};

std::string svg_beside(const std::string& png_path) {
    std::filesystem::path p(png_path);
    p.replace_extension(".svg");
    return p.string();
}
}  // namespace

void set_svg_copies(bool on) { svg_copies = on; }
bool svg_copies_on() { return svg_copies; }

void save_png(const Figure& figure, const std::string& path) {
    save_figure(figure, path, Format::png);
    if (svg_copies) save_figure(figure, svg_beside(path), Format::svg);
}
void save_svg(const Figure& figure, const std::string& path) { save_figure(figure, path, Format::svg); }
void save_png(const Bars& bars, const std::string& path) {
    save_bars(bars, path, Format::png);
    if (svg_copies) save_bars(bars, svg_beside(path), Format::svg);
}
void save_svg(const Bars& bars, const std::string& path) { save_bars(bars, path, Format::svg); }

}  // namespace wayward::plot
