// The sky chart shared by the sky, solve and score panels. See sky_chart.hpp.
#include "viewer/sky_chart.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>

#include <SFML/Graphics/Sprite.hpp>

#include "sim/physics/geometry.hpp"
#include "sim/search/starfield.hpp"
#include "sim/base/units.hpp"
#include "viewer/analysis.hpp"
#include "viewer/calendar.hpp"
#include "viewer/palette.hpp"

namespace wayward::viewer {

ImVec2 SkyMap::to_screen(double lon, double lat) const {
    return {static_cast<float>(cx - wrap_pi(lon - center_lon) * scale), static_cast<float>(cy - (lat - center_lat) * scale)};
}

void SkyMap::to_sky(float sx, float sy, double& lon, double& lat) const {
    lon = wrap_two_pi(center_lon + (cx - sx) / scale);
    lat = std::clamp(center_lat + (cy - sy) / scale, -pi / 2, pi / 2);
}

SkyMap sky_map(const sf::FloatRect& area, const SkyView& v) {
    SkyMap s;
    s.cx = area.left + area.width * 0.5f;
    s.cy = area.top + area.height * 0.5f;
    s.scale = std::min(area.width / two_pi, area.height / pi) * v.zoom;
    s.center_lon = v.center_lon;
    s.center_lat = v.center_lat;
    return s;
}

SkyView sky_view_around(const sf::FloatRect& area, double lon, double lat, double radius) {
    SkyView v;
    v.center_lon = wrap_two_pi(lon);
    v.center_lat = std::clamp(lat, -pi / 2, pi / 2);
    const double fit = std::min(area.width / two_pi, area.height / pi);
    const double want = 0.5 * std::min(area.width, area.height) / std::max(radius, 1e-6);
    v.zoom = static_cast<float>(std::clamp(want / fit, 1.0, 4000.0));
    return v;
}

std::string format_deg(double radians, int decimals) {
    char buf[48];
    const double d = radians / deg;
    std::snprintf(buf, sizeof buf, "%s%.*f\u00b0", d < -0.5 * std::pow(10.0, -decimals) ? "\u2212" : "", decimals, std::abs(d));
    return buf;
}

std::string format_angle_arcmin(double arcmin) {
    char buf[48];
    if (std::abs(arcmin) < 90.0) std::snprintf(buf, sizeof buf, "%.1f\u2032", arcmin);
    else std::snprintf(buf, sizeof buf, "%.2f\u00b0", arcmin / 60.0);
    return buf;
}

const Prediction* shown_prediction(const ViewerModel& m, const ViewerControls& c, bool* exact) {
    if (exact) *exact = false;
    if (!m.analysis || !m.analysis->solution) return nullptr;
    const Analysis& a = *m.analysis;
    const auto k = static_cast<std::size_t>(std::max(0, c.selected_minimum));
    if (k == 0) {
        if (exact) *exact = true;
        return &a.solution->prediction;
    }
    if (a.minimum_view && a.minimum_view->solution_id == a.solution_id && a.minimum_view->minimum == k) return &a.minimum_view->prediction;
    return nullptr;
}

const std::vector<TrackPoint>& shown_track(const ViewerModel& m, const ViewerControls& c, const Prediction& shown) {
    if (m.analysis && m.analysis->minimum_view) {
        const MinimumView& v = *m.analysis->minimum_view;
        if (v.solution_id == m.analysis->solution_id && v.minimum == static_cast<std::size_t>(std::max(0, c.selected_minimum)) &&
            !v.fine_track.empty())
            return v.fine_track;
    }
    return shown.track;
}

void SkyChart::draw(sf::RenderTarget& target, ImDrawList& list, const sf::FloatRect& area, const SkyView& view,
                    const ViewerControls& c, const ViewerModel& m, const DrawContext& ctx, const SkyLayers& layers) {
    map_ = sky_map(area, view);
    labels_ = LabelPlacer(ImVec2(area.left + 4, area.top + 4), ImVec2(area.left + area.width - 4, area.top + area.height - 4));
    const ImVec2 lo(area.left, area.top), hi(area.left + area.width, area.top + area.height);
    if (layers.stars) {
        // The stars are SFML sprites: drawn under ImGui's lists, clipped to this area by a view of its own.
        const sf::View saved = target.getView();
        sf::View v(area);
        const sf::Vector2u size = target.getSize();
        v.setViewport({area.left / static_cast<float>(size.x), area.top / static_cast<float>(size.y),
                       area.width / static_cast<float>(size.x), area.height / static_cast<float>(size.y)});
        target.setView(v);
        draw_stars(target, area, m, ctx);
        target.setView(saved);
    }
    list.PushClipRect(lo, hi, true);
    if (layers.grid) draw_grid(list, area, ctx);
    const SkyPosition star = m.sky(0, c.time_days);
    if (layers.limit)
        fill_circle(list, star.lon, star.lat, m.elongation_limit(), im_color(palette::unobservable, 46),
                    im_color(palette::unobservable, 170), 1.5f);
    draw_star_direction(list, star, m, ctx);
    // Keep labels off the marks placed later.
    if (layers.marker && c.marker.placed) labels_.block(map_.to_screen(c.marker.lon, c.marker.lat), 10.0f);
    if (layers.solution && c.show_solution)
        if (const Prediction* p = shown_prediction(m, c, nullptr)) labels_.block(map_.to_screen(p->lon, p->lat), 6.0f);
    if (layers.solution) draw_solution(list, c, m, ctx, layers.solution_track_years);
    if (layers.planets) draw_planets(list, c, m, ctx, layers);
    if (layers.marker && c.marker.placed) draw_marker(list, c, m, ctx);
    list.PopClipRect();
}

void SkyChart::draw_stars(sf::RenderTarget& target, const sf::FloatRect& canvas, const ViewerModel& m, const DrawContext& ctx) {
    const SkyMap& map = map_;
    // The sprites only change with the view or the field: rebuild them then, draw the cached ones otherwise.
    const StarCacheKey key{canvas.left, canvas.top, canvas.width, canvas.height, map.scale, map.center_lon, map.center_lat,
                           m.stars.data(), m.stars.size(), m.star_spec.faint_mag};
    const sf::BlendMode add_texture(sf::BlendMode::One, sf::BlendMode::One, sf::BlendMode::Add);
    if (star_key_ && *star_key_ == key) {
        if (star_texture_ok_) {
            sf::Sprite sprite(star_texture_->getTexture());
            sprite.setPosition(canvas.left, canvas.top);
            target.draw(sprite, sf::RenderStates(add_texture));
        } else {
            draw_star_arrays(target, ctx);
        }
        return;
    }
    star_key_ = key;
    star_quads_.clear();
    star_points_.clear();
    const double bright = m.star_spec.bright_mag, faint = m.star_spec.faint_mag;
    const float tex = ctx.glow ? static_cast<float>(ctx.glow->getSize().x) : 1.0f;
    const float x0 = canvas.left - 8, x1 = canvas.left + canvas.width + 8;
    const float y0 = canvas.top - 8, y1 = canvas.top + canvas.height + 8;
    // A little larger when zoomed in, so a magnified field does not look empty.
    const double fit = std::min(canvas.width / two_pi, canvas.height / pi);
    const float grow = std::min(1.8f, static_cast<float>(std::pow(map.scale / fit, 0.12)));
    const double point_below = 0.28 / grow;
    for (const Star& s : m.stars) {
        const ImVec2 p = map.to_screen(s.lon, s.lat);
        if (p.x < x0 || p.x > x1 || p.y < y0 || p.y > y1) continue;
        const double u = std::clamp((faint - s.mag) / (faint - bright), 0.0, 1.0);  // 1 = brightest
        const float half = grow * static_cast<float>(1.3 + 5.0 * u * u * u);
        const auto alpha = static_cast<sf::Uint8>(std::clamp(45.0 + 210.0 * std::pow(u, 0.8), 0.0, 255.0));
        // A faint blue-white to warm-white tint from a hash of the position: variety, not physics.
        double h = std::sin(s.lon * 12.9898 + s.lat * 78.233) * 43758.5453;
        h -= std::floor(h);
        const auto tint = static_cast<float>(h);
        const sf::Color col(static_cast<sf::Uint8>(200 + 55 * tint), static_cast<sf::Uint8>(212 + 30 * tint),
                            static_cast<sf::Uint8>(255 - 45 * tint), alpha);
        if (u < point_below) {  // most stars are faint: one pixel each is cheaper to draw than a sprite
            star_points_.append(sf::Vertex({std::floor(p.x) + 0.5f, std::floor(p.y) + 0.5f}, col));
            continue;
        }
        star_quads_.append(sf::Vertex({p.x - half, p.y - half}, col, {0, 0}));
        star_quads_.append(sf::Vertex({p.x + half, p.y - half}, col, {tex, 0}));
        star_quads_.append(sf::Vertex({p.x + half, p.y + half}, col, {tex, tex}));
        star_quads_.append(sf::Vertex({p.x - half, p.y + half}, col, {0, tex}));
    }
    // Into the texture on transparent black (additive, so it holds each pixel's sum of star light), then onto
    // the sky; without a texture, straight onto the sky as before.
    const auto w = static_cast<unsigned>(std::ceil(canvas.width)), h = static_cast<unsigned>(std::ceil(canvas.height));
    star_texture_ok_ = false;
    if (w > 0 && h > 0) {
        if (!star_texture_ || star_texture_->getSize() != sf::Vector2u(w, h)) {
            star_texture_ = std::make_unique<sf::RenderTexture>();
            if (!star_texture_->create(w, h)) star_texture_.reset();
        }
        if (star_texture_) {
            star_texture_->setView(sf::View(sf::FloatRect(canvas.left, canvas.top, static_cast<float>(w), static_cast<float>(h))));
            star_texture_->clear(sf::Color::Transparent);
            draw_star_arrays(*star_texture_, ctx);
            star_texture_->display();
            star_texture_ok_ = true;
        }
    }
    if (star_texture_ok_) {
        sf::Sprite sprite(star_texture_->getTexture());
        sprite.setPosition(canvas.left, canvas.top);
        target.draw(sprite, sf::RenderStates(add_texture));
    } else {
        draw_star_arrays(target, ctx);
    }
}

void SkyChart::draw_star_arrays(sf::RenderTarget& target, const DrawContext& ctx) {
    sf::RenderStates states;
    states.texture = ctx.glow;
    states.blendMode = sf::BlendAdd;
    target.draw(star_quads_, states);
    target.draw(star_points_, sf::RenderStates(sf::BlendAdd));
}

namespace {

// Grid steps in radians: 1, 2, 5, 10, 15, 30 degrees and decimal fractions of a degree.
double nice_grid_step(double at_least) {
    for (double d : {1.0, 2.0, 5.0, 10.0, 15.0, 30.0, 45.0, 90.0})
        if (d * deg >= at_least) return d * deg;
    if (at_least > 90.0 * deg) return 90.0 * deg;
    return nice_step(at_least / deg) * deg;
}

}  // namespace

void SkyChart::draw_grid(ImDrawList& list, const sf::FloatRect& canvas, const DrawContext& ctx) {
    const SkyMap& map = map_;
    // The sky occupies latitudes -90..90; beyond the poles the canvas is left dark.
    const float top = std::max(canvas.top, map.to_screen(map.center_lon, pi / 2).y);
    const float bottom = std::min(canvas.top + canvas.height, map.to_screen(map.center_lon, -pi / 2).y);
    const float left = canvas.left, right = canvas.left + canvas.width;
    if (top > canvas.top) list.AddRectFilled(ImVec2(left, canvas.top), ImVec2(right, top), IM_COL32(6, 8, 14, 255));
    if (bottom < canvas.top + canvas.height)
        list.AddRectFilled(ImVec2(left, bottom), ImVec2(right, canvas.top + canvas.height), IM_COL32(6, 8, 14, 255));
    list.AddRect(ImVec2(left - 1, top), ImVec2(right + 1, bottom), im_color(palette::grid_strong, 160));

    const double step = nice_grid_step(70.0 / map.scale);
    const int decimals = step < 0.99 * deg ? (step < 0.099 * deg ? 2 : 1) : 0;
    const float ts = ctx.text_size * 0.8f;
    // Labels for meridians go just under the sky if there is room, else along its bottom edge.
    const float label_y = bottom + ts * 1.6f < canvas.top + canvas.height ? bottom + 4.0f : bottom - ts * 1.5f;
    const double half_width = 0.5 * canvas.width / map.scale;
    const int n_lon = std::min(400, static_cast<int>(2.0 * half_width / step) + 2);
    const double first = std::floor((map.center_lon - half_width) / step) * step;
    for (int k = 0; k <= n_lon; ++k) {
        const double lon = first + k * step;
        const ImVec2 a = map.to_screen(lon, map.center_lat);
        if (a.x < left - 1 || a.x > right + 1) continue;
        list.AddLine(ImVec2(a.x, top), ImVec2(a.x, bottom), im_color(palette::grid, 110));
        double shown = wrap_two_pi(lon);
        if (two_pi - shown < 1e-9) shown = 0.0;  // 359.999... is the 0 meridian
        if (a.x - 2.0f * ts < left || a.x + 2.0f * ts > right) continue;  // its label would be cut off
        draw_text(list, ctx.fonts, ts, ImVec2(a.x, label_y), im_color(palette::text_dim), format_deg(shown, decimals), Align::centre, true);
    }
    const double half_height = 0.5 * canvas.height / map.scale;
    const double lat_first = std::ceil((std::max(-pi / 2, map.center_lat - half_height)) / step) * step;
    for (double lat = lat_first; lat <= std::min(pi / 2, map.center_lat + half_height) + 1e-12; lat += step) {
        const float y = map.to_screen(map.center_lon, lat).y;
        const bool equator = std::abs(lat) < 1e-9;
        list.AddLine(ImVec2(left, y), ImVec2(right, y), im_color(equator ? palette::grid_strong : palette::grid, equator ? 150 : 110));
        draw_text(list, ctx.fonts, ts, ImVec2(left + 6, y - ts * 1.3f), im_color(palette::text_dim),
                  format_deg(equator ? 0.0 : lat, decimals), Align::left, true);
    }
}

void SkyChart::fill_circle(ImDrawList& list, double lon, double lat, double radius, ImU32 fill, ImU32 edge, float edge_width) const {
    // A small circle (convex for the sizes drawn here), repeated a turn either side so it wraps.
    const SkyMap& map = map_;
    const std::vector<SkyPoint> ring = small_circle(lon, lat, radius, 120);
    const ImVec2 centre = map.to_screen(lon, lat);
    std::vector<ImVec2> pts(ring.size());
    for (int turn = -1; turn <= 1; ++turn) {
        const float shift = static_cast<float>(turn * two_pi * map.scale);
        for (std::size_t k = 0; k < ring.size(); ++k)
            pts[k] = ImVec2(centre.x + shift - static_cast<float>(wrap_pi(ring[k].lon - lon) * map.scale),
                            static_cast<float>(map.cy - (ring[k].lat - map.center_lat) * map.scale));
        if (fill) list.AddConvexPolyFilled(pts.data(), static_cast<int>(pts.size()), fill);
        if (edge) list.AddPolyline(pts.data(), static_cast<int>(pts.size()), edge, ImDrawFlags_Closed, edge_width);
    }
}

void SkyChart::draw_ellipse(ImDrawList& list, const Prediction& p, ImU32 fill, ImU32 edge) const {
    // sim gives the 1-sigma ellipse in (lambda cos(beta), beta) arcsec with its major axis at orientation_deg
    // from +lambda towards +beta; drawn here as offsets from the predicted point.
    if (!(p.semi_major_arcsec > 0)) return;
    const double phi = p.orientation_deg * deg, cb = std::max(std::cos(p.lat), 1e-6);
    const ImVec2 centre = map_.to_screen(p.lon, p.lat);
    std::vector<ImVec2> pts;
    for (int k = 0; k < 96; ++k) {
        const double th = two_pi * k / 96.0;
        const double u = p.semi_major_arcsec * std::cos(th), v = p.semi_minor_arcsec * std::sin(th);
        const double dx = (u * std::cos(phi) - v * std::sin(phi)) * arcsec, dy = (u * std::sin(phi) + v * std::cos(phi)) * arcsec;
        pts.emplace_back(centre.x - static_cast<float>(dx / cb * map_.scale), centre.y - static_cast<float>(dy * map_.scale));
    }
    if (fill) list.AddConvexPolyFilled(pts.data(), static_cast<int>(pts.size()), fill);
    if (edge) list.AddPolyline(pts.data(), static_cast<int>(pts.size()), edge, ImDrawFlags_Closed, 1.8f);
}

void SkyChart::draw_track(ImDrawList& list, const std::vector<TrackPoint>& track, ImU32 colour, float width, bool dashed,
                          double from_year, double to_year) const {
    std::vector<ImVec2> pts;
    const float jump = static_cast<float>(pi * map_.scale);  // a longer step is the wrap, not the track
    auto flush = [&] {
        if (pts.size() >= 2 && !dashed) list.AddPolyline(pts.data(), static_cast<int>(pts.size()), colour, 0, width);
        if (pts.size() >= 2 && dashed) {
            // Dashes of 8 px with 5 px gaps, carried along the polyline.
            const float on = 8.0f, period = 13.0f;
            float phase = 0.0f;
            for (std::size_t k = 1; k < pts.size(); ++k) {
                const ImVec2 a = pts[k - 1], b = pts[k];
                const float len = std::hypot(b.x - a.x, b.y - a.y);
                float s = 0.0f;
                while (s < len) {
                    const float in_period = std::fmod(phase + s, period);
                    const float step = in_period < on ? std::min(on - in_period, len - s) : std::min(period - in_period, len - s);
                    if (in_period < on) {
                        const float e = s + step;
                        list.AddLine(ImVec2(a.x + (b.x - a.x) * s / len, a.y + (b.y - a.y) * s / len),
                                     ImVec2(a.x + (b.x - a.x) * e / len, a.y + (b.y - a.y) * e / len), colour, width);
                    }
                    s += std::max(step, 1e-3f);
                }
                phase = std::fmod(phase + len, period);
            }
        }
        pts.clear();
    };
    for (const TrackPoint& t : track) {
        if (t.year < from_year || t.year > to_year) continue;
        const ImVec2 p = map_.to_screen(t.lon, t.lat);
        if (!pts.empty() && std::abs(p.x - pts.back().x) > jump) flush();
        pts.push_back(p);
    }
    flush();
}

void SkyChart::draw_cross(ImDrawList& list, double lon, double lat, ImU32 col, float arm) const {
    const ImVec2 s = map_.to_screen(lon, lat);
    const float gap = 3.0f;
    list.AddLine(ImVec2(s.x - arm, s.y), ImVec2(s.x - gap, s.y), col, 2.0f);
    list.AddLine(ImVec2(s.x + gap, s.y), ImVec2(s.x + arm, s.y), col, 2.0f);
    list.AddLine(ImVec2(s.x, s.y - arm), ImVec2(s.x, s.y - gap), col, 2.0f);
    list.AddLine(ImVec2(s.x, s.y + gap), ImVec2(s.x, s.y + arm), col, 2.0f);
}

void SkyChart::draw_star_direction(ImDrawList& list, const SkyPosition& star, const ViewerModel& m, const DrawContext& ctx) {
    const ImVec2 s = map_.to_screen(star.lon, star.lat);
    for (int k = 4; k >= 1; --k)
        list.AddCircleFilled(s, 7.0f + 4.0f * static_cast<float>(k), im_color(palette::star, static_cast<std::uint8_t>(16 + 6 * (4 - k))), 32);
    list.AddCircleFilled(s, 7.0f, im_color(palette::star), 24);
    labels_.block(s, 9.0f);
    draw_label(list, ctx.fonts, ctx.text_size * 0.9f, labels_, s, 9.0f, im_color(palette::text), m.bodies[0].name);
    char buf[96];
    std::snprintf(buf, sizeof buf, "elongation < %.0f\u00b0", m.facts.elongation_limit_deg);
    const float reach = static_cast<float>(m.elongation_limit() * map_.scale);
    if (reach > 30.0f && reach < 2000.0f)
        draw_text(list, ctx.fonts, ctx.text_size * 0.8f, ImVec2(s.x, s.y + reach + 4.0f), im_color(palette::unobservable, 235), buf,
                  Align::centre, true);
}

void SkyChart::draw_planets(ImDrawList& list, const ViewerControls& c, const ViewerModel& m, const DrawContext& ctx,
                            const SkyLayers& layers) {
    const SkyMap& map = map_;
    const std::size_t n = m.body_count();
    const double t = c.time_days;
    const double span = layers.track_years * julian_year_days;
    std::vector<ImVec2> pts;
    struct Pending {
        ImVec2 at;
        ImU32 colour;
        std::string text;
    };
    std::vector<Pending> pending;
    const float jump = static_cast<float>(pi * map.scale);
    auto flush = [&](ImU32 col, float thick) {
        if (pts.size() >= 2) list.AddPolyline(pts.data(), static_cast<int>(pts.size()), col, 0, thick);
        pts.clear();
    };
    for (const BodyView& b : m.bodies) {
        if (b.index == 0 || b.index == m.observer || !m.shows(b.index)) continue;
        const sf::Color col = palette::for_body(b.role, b.observer);
        const SkyPosition now = m.sky(b.index, t);
        if (layers.tracks) {
            const std::size_t k0 = m.nearest_sample(std::max(m.t_begin(), t - span));
            const std::size_t k1 = m.nearest_sample(t);
            const std::size_t k2 = m.nearest_sample(std::min(m.t_end(), t + span));
            // Thin the samples when a track would have far more points than pixels.
            const std::size_t stride = std::max<std::size_t>(1, (k2 - k0) / 2000);
            for (int part = 0; part < 2; ++part) {
                const std::size_t a = part == 0 ? k0 : k1, z = part == 0 ? k1 : k2;
                const ImU32 colour = im_color(col, part == 0 ? 210 : 80);
                const float thick = part == 0 ? 2.0f : 1.3f;
                pts.clear();
                if (part == 1) pts.push_back(map.to_screen(now.lon, now.lat));
                for (std::size_t k = a; k <= z; k += stride) {
                    const ImVec2 p = map.to_screen(m.sample_lon[k * n + b.index], m.sample_lat[k * n + b.index]);
                    if (!pts.empty() && std::abs(p.x - pts.back().x) > jump) flush(colour, thick);
                    pts.push_back(p);
                }
                if (part == 0) {
                    const ImVec2 p = map.to_screen(now.lon, now.lat);
                    if (!pts.empty() && std::abs(p.x - pts.back().x) > jump) flush(colour, thick);
                    pts.push_back(p);
                }
                flush(colour, thick);
            }
        }
        const ImVec2 s = map.to_screen(now.lon, now.lat);
        list.AddCircleFilled(s, 5.0f, im_color(col), 20);
        list.AddCircle(s, 7.5f, im_color(col, 160), 20, 1.2f);
        labels_.block(s, 8.0f);
        if (layers.labels) pending.push_back({s, im_color(col), b.name});
    }
    for (const auto& p : pending) draw_label(list, ctx.fonts, ctx.text_size * 0.9f, labels_, p.at, 8.0f, p.colour, p.text);
}

void SkyChart::draw_marker(ImDrawList& list, const ViewerControls& c, const ViewerModel& m, const DrawContext& ctx) {
    const PredictionMarker& mk = c.marker;
    const ImU32 col = im_color(palette::prediction);
    fill_circle(list, mk.lon, mk.lat, mk.radius, im_color(palette::prediction, 34), col, 1.8f);
    draw_cross(list, mk.lon, mk.lat, col);
    const ImVec2 s = map_.to_screen(mk.lon, mk.lat);
    const float r_px = std::max(static_cast<float>(mk.radius * map_.scale), 9.0f);
    labels_.block(s, 9.0f);
    const std::string text = "your prediction, " + format_decimal_year(m.year(mk.epoch_days), 2) + ", r = " + format_deg(mk.radius, 2);
    draw_label(list, ctx.fonts, ctx.text_size * 0.85f, labels_, s, std::min(r_px, 60.0f), col, text);
}

void SkyChart::draw_solution(ImDrawList& list, const ViewerControls& c, const ViewerModel& m, const DrawContext& ctx, double track_years) {
    if (!c.show_solution) return;
    bool exact = false;
    const Prediction* p = shown_prediction(m, c, &exact);
    if (!p) return;
    const ImU32 col = im_color(palette::solution), faint = im_color(palette::solution, 60);
    if (exact) {
        // The virtual bodies (the solve's weighted samples at the epoch), each a dot as opaque as its weight
        // against an equal share: the map the search and the HEALPix file use.
        const std::size_t nb = p->sample_lon.size();
        if (nb > 0 && p->sample_lat.size() == nb && p->sample_weight.size() == nb)
            for (std::size_t k = 0; k < nb; ++k) {
                const double share = p->sample_weight[k] * static_cast<double>(nb);
                const int alpha = static_cast<int>(std::clamp(70.0 + 110.0 * std::sqrt(share), 40.0, 230.0));
                list.AddCircleFilled(map_.to_screen(p->sample_lon[k], p->sample_lat[k]), 1.6f, im_color(palette::solution, alpha), 6);
            }
        if (p->radius90_arcsec > 0)
            fill_circle(list, p->lon, p->lat, p->radius90_arcsec * arcsec, im_color(palette::solution, 22), im_color(palette::solution, 150), 1.2f);
        draw_ellipse(list, *p, faint, col);
    }
    fill_circle(list, p->lon, p->lat, m.field_radius(), 0, im_color(palette::solution, 230), 1.4f);
    draw_track(list, shown_track(m, c, *p), im_color(palette::solution, 200), 1.4f, false, p->epoch_year - track_years,
               p->epoch_year + track_years);
    const ImVec2 s = map_.to_screen(p->lon, p->lat);
    list.AddCircleFilled(s, 4.0f, col, 16);
    labels_.block(s, 6.0f);
    const std::string who = exact ? "solver, " : "minimum " + std::to_string(c.selected_minimum + 1) + ", ";
    draw_label(list, ctx.fonts, ctx.text_size * 0.85f, labels_, s, 6.0f, im_color(palette::text), who + format_decimal_year(p->epoch_year, 2));
}

}  // namespace wayward::viewer
