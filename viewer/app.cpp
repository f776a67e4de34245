// The viewer's window, frame loop, sidebar and screenshot mode. See app.hpp.
#include "viewer/app.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <iostream>
#include <memory>
#include <optional>
#include <vector>

#include <SFML/Graphics.hpp>

#include <imgui.h>

#include "sim/base/units.hpp"
#include "viewer/analysis.hpp"
#include "viewer/calendar.hpp"
#include "viewer/controls.hpp"
#include "viewer/draw_util.hpp"
#include "viewer/fonts.hpp"
#include "viewer/imgui_sfml_bridge.hpp"
#include "viewer/model.hpp"
#include "viewer/palette.hpp"
#include "viewer/panels.hpp"

namespace wayward::viewer {

namespace {

constexpr float sidebar_width = 350.0f;
constexpr float text_px = 16.0f;

void apply_style() {
    ImGui::StyleColorsDark();
    ImGuiStyle& st = ImGui::GetStyle();
    st.WindowRounding = 0.0f;
    st.WindowBorderSize = 0.0f;
    st.FrameRounding = 4.0f;
    st.GrabRounding = 4.0f;
    st.FramePadding = ImVec2(8, 4);
    st.ItemSpacing = ImVec2(8, 5);
    st.WindowPadding = ImVec2(14, 12);
    st.CellPadding = ImVec2(4, 1);
    ImVec4* c = st.Colors;
    auto rgb = [](float r, float g, float b, float a = 1.0f) { return ImVec4(r / 255.0f, g / 255.0f, b / 255.0f, a); };
    c[ImGuiCol_WindowBg] = palette::to_imgui(palette::panel_background);
    c[ImGuiCol_Text] = palette::to_imgui(palette::text);
    c[ImGuiCol_TextDisabled] = palette::to_imgui(palette::text_dim);
    c[ImGuiCol_FrameBg] = rgb(32, 40, 60);
    c[ImGuiCol_FrameBgHovered] = rgb(42, 54, 80);
    c[ImGuiCol_FrameBgActive] = rgb(50, 64, 94);
    c[ImGuiCol_Button] = rgb(36, 56, 84);
    c[ImGuiCol_ButtonHovered] = rgb(0, 114, 178);   // Okabe-Ito blue
    c[ImGuiCol_ButtonActive] = rgb(0, 96, 150);
    c[ImGuiCol_Header] = rgb(36, 56, 84);
    c[ImGuiCol_HeaderHovered] = rgb(0, 114, 178, 0.8f);
    c[ImGuiCol_HeaderActive] = rgb(0, 114, 178);
    c[ImGuiCol_SliderGrab] = palette::to_imgui(palette::sky_blue);
    c[ImGuiCol_SliderGrabActive] = palette::to_imgui(palette::orange);
    c[ImGuiCol_CheckMark] = palette::to_imgui(palette::sky_blue);
    c[ImGuiCol_PlotHistogram] = palette::to_imgui(palette::sky_blue);  // progress bars
    c[ImGuiCol_PopupBg] = rgb(22, 28, 44, 0.98f);
    c[ImGuiCol_ModalWindowDimBg] = rgb(8, 10, 18, 0.6f);
    c[ImGuiCol_TitleBgActive] = rgb(36, 56, 84);
    c[ImGuiCol_Separator] = rgb(52, 60, 80);
    c[ImGuiCol_TableRowBgAlt] = rgb(255, 255, 255, 0.03f);
    c[ImGuiCol_TableHeaderBg] = rgb(30, 38, 56);
}

// A soft round sprite: Gaussian core plus a faint halo, white with the shape in alpha.
sf::Texture make_glow_texture() {
    const unsigned n = 32;
    sf::Image img;
    img.create(n, n, sf::Color::Transparent);
    for (unsigned y = 0; y < n; ++y)
        for (unsigned x = 0; x < n; ++x) {
            const double dx = (x + 0.5) / n * 2.0 - 1.0, dy = (y + 0.5) / n * 2.0 - 1.0;
            const double r2 = dx * dx + dy * dy;
            const double a = std::exp(-r2 / (2 * 0.09)) + 0.12 * std::exp(-r2 / (2 * 0.3));
            const double edge = std::clamp((1.0 - std::sqrt(r2)) * 4.0, 0.0, 1.0);
            img.setPixel(x, y, sf::Color(255, 255, 255, static_cast<sf::Uint8>(std::clamp(a * edge, 0.0, 1.0) * 255)));
        }
    sf::Texture t;
    t.loadFromImage(img);
    t.setSmooth(true);
    return t;
}

double median(std::vector<double> v) {
    if (v.empty()) return 0.0;
    std::sort(v.begin(), v.end());
    return v.size() % 2 ? v[v.size() / 2] : 0.5 * (v[v.size() / 2 - 1] + v[v.size() / 2]);
}

class App {
public:
    explicit App(const AppOptions& o) : opt_(o), panels_(make_panels()) {}

    int run() {
        std::string why;
        if (!display_available(&why)) {
            std::cerr << "wayward-view: " << why << "\n";
            return 2;
        }
        LoadOptions mo;
        mo.seed = opt_.seed;
        mo.star_count = opt_.stars;
        mo.star_faint_mag = controls_.star_faint_mag;
        LoadOutcome loaded = load_model(opt_.input, mo);
        if (loaded.model) {
            model_ = std::move(loaded.model);
            attach_analysis(*model_);
        } else {
            error_ = loaded.error;
            std::cerr << "wayward-view: " << error_ << "\n";
        }
        for (std::size_t k = 0; k < panels_.size(); ++k)
            if (opt_.panel == panels_[k]->name()) controls_.panel = static_cast<int>(k);
        if (model_ && opt_.year) {
            const double t = model_->days_at_year(*opt_.year);
            if (!(t >= model_->t_begin() && t <= model_->t_end())) {
                error_ = "--year " + format_decimal_year(*opt_.year, 2) + " is outside the scenario's span " +
                         format_decimal_year(model_->year(model_->t_begin()), 2) + " to " +
                         format_decimal_year(model_->year(model_->t_end()), 2);
                std::cerr << "wayward-view: " << error_ << "\n";
                model_.reset();
            } else {
                controls_.time_days = t;
            }
        }
        if (model_) apply_trainee_options();

        if (!open_window()) return 2;
        const int status = loop();
        if (headless()) print_scores();
        bridge_shutdown(bridge_);
        ImGui::DestroyContext();
        if (model_ && model_->analysis) model_->analysis->solve_job.cancel();  // closing the window stops a run
        return status;
    }

private:
    AppOptions opt_;
    std::vector<std::unique_ptr<Panel>> panels_;
    std::optional<ViewerModel> model_;
    std::string error_;
    ViewerControls controls_;
    // Both are GL resources: constructing one opens the X display (and SFML aborts if it cannot), so they are
    // made only after display_available() said yes.
    std::optional<sf::RenderWindow> window_storage_;
    std::optional<sf::Texture> glow_;
    sf::RenderWindow* window_ = nullptr;  // -> *window_storage_
    ImGuiSfmlBridge bridge_;
    DrawContext ctx_;
    bool canvas_drag_ = false;
    std::vector<double> frame_ms_;
    sf::Clock wait_clock_;
    // The sidebar's last frame: the height its content needs, the window's height and how far it can scroll
    // (reported in screenshot mode, so a test can check that what does not fit scrolls).
    float sidebar_content_h_ = 0.0f, sidebar_window_h_ = 0.0f, sidebar_scroll_max_ = 0.0f;

    bool headless() const { return !opt_.screenshot.empty(); }
    bool refused_ = false;  // a headless reveal was refused
    std::optional<int> pending_minimum_;  // --minimum, applied when the solution it refers to is there

    // --prediction, --run-solve, --minimum, --reveal: trainee mode only.
    void apply_trainee_options() {
        ViewerModel& m = *model_;
        const bool trainee = m.mode == ViewerMode::trainee;
        if (!trainee && (!opt_.prediction.empty() || opt_.run_solve || opt_.reveal || opt_.minimum != 1)) {
            error_ = "--prediction, --run-solve, --minimum and --reveal need an exercise folder (trainee mode), not a scenario file";
            std::cerr << "wayward-view: " << error_ << "\n";
            model_.reset();
            return;
        }
        if (!trainee) return;
        if (!opt_.prediction.empty()) {
            const double year = opt_.prediction.size() > 2 ? opt_.prediction[2] : m.search_epoch_year();
            const double t = m.days_at_year(year);
            if (!(t >= m.t_begin() && t <= m.t_end())) {
                error_ = "--prediction: the year " + format_decimal_year(year, 2) + " is outside the exercise's span";
                std::cerr << "wayward-view: " << error_ << "\n";
                model_.reset();
                return;
            }
            controls_.marker = PredictionMarker{true, wrap_two_pi(opt_.prediction[0] * deg), opt_.prediction[1] * deg, t, m.field_radius()};
        }
        if (opt_.minimum > 1) pending_minimum_ = opt_.minimum - 1;
        Analysis& a = *m.analysis;
        if (opt_.run_solve && !a.start_solve()) std::cerr << "wayward-view: " << a.form_error << "\n";
        if (opt_.reveal && !a.request_reveal(m)) {
            std::cerr << "wayward-view: the answer key was refused, nothing revealed: " << a.reveal_error << "\n";
            refused_ = true;
        }
    }

    // One line per score, for scripts and tests (screenshot mode).
    void print_scores() const {
        if (!model_ || !model_->analysis || !model_->analysis->scores) return;
        const ScoreSet& s = *model_->analysis->scores;
        for (const auto* sp : {s.trainee ? &*s.trainee : nullptr, s.solver ? &*s.solver : nullptr}) {
            if (!sp) continue;
            std::printf("wayward-view: score %s separation_arcmin=%.6f hit=%d epoch=%.6f\n", sp == (s.trainee ? &*s.trainee : nullptr) ? "trainee" : "solution",
                        sp->score.separation_arcmin, sp->score.hit ? 1 : 0, sp->score.epoch_year);
        }
        if (!s.trainee_error.empty()) std::printf("wayward-view: score trainee error: %s\n", s.trainee_error.c_str());
        if (!s.solver_error.empty()) std::printf("wayward-view: score solution error: %s\n", s.solver_error.c_str());
    }

    bool open_window() {
        std::string title = "Wayward viewer";
        if (model_) title += " \u2014 " + model_->facts.name;
        window_storage_.emplace();
        window_ = &*window_storage_;
        release_display_probe();
        window_->create(sf::VideoMode(opt_.width, opt_.height), sf::String::fromUtf8(title.begin(), title.end()),
                       sf::Style::Default);
        if (!window_->isOpen()) {
            std::cerr << "wayward-view: could not open a " << opt_.width << "x" << opt_.height << " window\n";
            return false;
        }
        window_->setPosition({0, 0});  // no window manager under Xvfb: keep it on screen
        window_->setFramerateLimit(headless() ? 0 : 60);
        IMGUI_CHECKVERSION();
        ImGui::CreateContext();
        ImGuiIO& io = ImGui::GetIO();
        io.IniFilename = nullptr;  // no imgui.ini in the working directory
        apply_style();
        std::string font_error;
        if (!load_imgui_fonts(ctx_.fonts, text_px, &font_error)) std::cerr << "wayward-view: " << font_error << "\n";
        ctx_.text_size = text_px;
        if (!bridge_init(bridge_, *window_)) {
            std::cerr << "wayward-view: the OpenGL 3 renderer for ImGui could not start on this display\n";
            ImGui::DestroyContext();
            return false;
        }
        glow_.emplace(make_glow_texture());
        ctx_.glow = &*glow_;
        return true;
    }

    sf::FloatRect canvas() const {
        const sf::Vector2u s = window_->getSize();
        const float w = std::min(sidebar_width, static_cast<float>(s.x) * 0.5f);
        return {w, 0.0f, std::max(1.0f, static_cast<float>(s.x) - w), static_cast<float>(s.y)};
    }

    Panel& panel() { return *panels_[static_cast<std::size_t>(std::clamp<int>(controls_.panel, 0, static_cast<int>(panels_.size()) - 1))]; }

    void step_time(double days) {
        if (!model_) return;
        controls_.time_days = std::clamp(controls_.time_days + days, model_->t_begin(), model_->t_end());
    }

    void handle_event(const sf::Event& e) {
        const ImGuiIO& io = ImGui::GetIO();
        const bool imgui_mouse = io.WantCaptureMouse, imgui_keys = io.WantCaptureKeyboard;
        bridge_process_event(bridge_, e);
        switch (e.type) {
            case sf::Event::Closed:
                window_->close();
                return;
            case sf::Event::Resized:
                window_->setView(sf::View(sf::FloatRect(0, 0, static_cast<float>(e.size.width), static_cast<float>(e.size.height))));
                return;
            case sf::Event::KeyPressed:
                if (imgui_keys || ImGui::IsPopupOpen("", ImGuiPopupFlags_AnyPopupId)) return;
                if (e.key.code == sf::Keyboard::Space) controls_.playing = !controls_.playing;
                if (e.key.code == sf::Keyboard::Right) step_time(controls_.step_days);
                if (e.key.code == sf::Keyboard::Left) step_time(-controls_.step_days);
                if (e.key.code >= sf::Keyboard::Num1 && e.key.code < sf::Keyboard::Num1 + static_cast<int>(panels_.size()))
                    controls_.panel = e.key.code - sf::Keyboard::Num1;
                return;
            default:
                break;
        }
        if (!model_) return;
        const sf::FloatRect area = canvas();
        switch (e.type) {
            case sf::Event::MouseButtonPressed:
                if (!imgui_mouse && area.contains(static_cast<float>(e.mouseButton.x), static_cast<float>(e.mouseButton.y))) {
                    canvas_drag_ = true;
                    panel().on_mouse(e, area, controls_, *model_);
                }
                break;
            case sf::Event::MouseButtonReleased:
                if (canvas_drag_) panel().on_mouse(e, area, controls_, *model_);
                canvas_drag_ = false;
                break;
            case sf::Event::MouseMoved:
                if (canvas_drag_) panel().on_mouse(e, area, controls_, *model_);
                break;
            case sf::Event::MouseWheelScrolled:
                if (!imgui_mouse && area.contains(static_cast<float>(e.mouseWheelScroll.x), static_cast<float>(e.mouseWheelScroll.y)))
                    panel().on_mouse(e, area, controls_, *model_);
                break;
            default:
                break;
        }
    }

    void time_controls() {
        ViewerModel& m = *model_;
        const double year = m.year(controls_.time_days);
        ImGui::PushFont(ctx_.fonts.fonts[2]);
        ImGui::TextUnformatted(format_decimal_year(year).c_str());
        ImGui::PopFont();
        ImGui::SameLine();
        ImGui::AlignTextToFramePadding();
        ImGui::TextDisabled("%s", format_calendar_date(calendar_date(year)).c_str());
        if (ImGui::IsItemHovered())
            ImGui::SetTooltip("Years are Julian epochs (365.25 days each from 2000 January 1.5);\n"
                              "the date is the Gregorian day they fall on, so 1700.000 is 1699 Dec 29.");

        double y = year;
        const double y0 = m.year(m.t_begin()), y1 = m.year(m.t_end());
        ImGui::SetNextItemWidth(-1.0f);
        if (ImGui::SliderScalar("##time", ImGuiDataType_Double, &y, &y0, &y1, "%.2f"))
            controls_.time_days = std::clamp(m.days_at_year(y), m.t_begin(), m.t_end());

        if (ImGui::Button(controls_.playing ? "Pause" : "Play", ImVec2(80, 0))) controls_.playing = !controls_.playing;
        ImGui::SameLine();
        if (ImGui::Button("\u25c0 step")) step_time(-controls_.step_days);
        ImGui::SameLine();
        if (ImGui::Button("step \u25b6")) step_time(controls_.step_days);
        ImGui::SetNextItemWidth(-90.0f);
        ImGui::SliderFloat("speed", &controls_.speed_days_per_second, 1.0f, 3650.0f, "%.0f d/s", ImGuiSliderFlags_Logarithmic);
        ImGui::SetNextItemWidth(-90.0f);
        ImGui::SliderFloat("step", &controls_.step_days, 0.5f, 365.25f, "%.1f d", ImGuiSliderFlags_Logarithmic);
    }

    void sidebar() {
        const sf::Vector2u s = window_->getSize();
        const float w = std::min(sidebar_width, static_cast<float>(s.x) * 0.5f);
        ImGui::SetNextWindowPos(ImVec2(0, 0));
        ImGui::SetNextWindowSize(ImVec2(w, static_cast<float>(s.y)));
        const ImGuiWindowFlags flags = ImGuiWindowFlags_NoTitleBar | ImGuiWindowFlags_NoResize | ImGuiWindowFlags_NoMove |
                                       ImGuiWindowFlags_NoCollapse | ImGuiWindowFlags_NoSavedSettings |
                                       ImGuiWindowFlags_NoBringToFrontOnFocus;
        ImGui::Begin("##sidebar", nullptr, flags);
        ImGui::PushFont(ctx_.fonts.fonts[2]);
        ImGui::TextUnformatted("Wayward");
        ImGui::PopFont();
        ImGui::SameLine();
        ImGui::AlignTextToFramePadding();
        ImGui::TextDisabled("viewer");
        if (!model_) {
            ImGui::Separator();
            ImGui::TextColored(palette::to_imgui(palette::vermillion), "Nothing to show");
            ImGui::PushTextWrapPos(0.0f);
            ImGui::TextUnformatted(error_.c_str());
            ImGui::PopTextWrapPos();
            ImGui::End();
            return;
        }
        ViewerModel& m = *model_;
        ImGui::TextUnformatted(m.facts.name.c_str());
        // A trainee's folder carries no seed (it would regenerate the truth), so only author mode shows one.
        if (m.mode == ViewerMode::author)
            ImGui::TextDisabled("%s \u00b7 seed %llu", std::filesystem::path(m.source).filename().string().c_str(),
                                static_cast<unsigned long long>(m.seed));
        else
            ImGui::TextDisabled("%s", std::filesystem::path(m.source).filename().string().c_str());
        if (m.mode == ViewerMode::author)
            ImGui::TextColored(palette::to_imgui(palette::hidden), "Author mode: the hidden body is shown");
        else if (m.revealed)
            ImGui::TextColored(palette::to_imgui(palette::hidden), "Trainee mode: the answer key is open");
        else
            ImGui::TextDisabled("Trainee mode: the hidden body is sealed");
        ImGui::Separator();

        for (std::size_t k = 0; k < panels_.size(); ++k)
            ImGui::RadioButton(panels_[k]->title(), &controls_.panel, static_cast<int>(k));
        ImGui::Separator();
        time_controls();
        ImGui::Separator();
        if (ImGui::CollapsingHeader(panel().title(), ImGuiTreeNodeFlags_DefaultOpen)) panel().sidebar(controls_, m);

        if (ImGui::CollapsingHeader("Observing plan")) observing_plan(m);

        ImGui::Separator();
        ImGui::TextDisabled("Space play/pause \u00b7 \u2190/\u2192 step \u00b7 1\u2013%zu panels", panels_.size());
        const ImGuiIO& io = ImGui::GetIO();
        if (!headless()) ImGui::TextDisabled("%.1f ms per frame", 1000.0f / std::max(io.Framerate, 1e-3f));
        sidebar_content_h_ = ImGui::GetCursorPosY();
        sidebar_window_h_ = ImGui::GetWindowHeight();
        sidebar_scroll_max_ = ImGui::GetScrollMaxY();
        ImGui::End();
    }

    // The observing plan: the scenario's (author) as the records will have it, or the brief's (trainee).
    void observing_plan(const ViewerModel& m) {
        const PlanFacts& f = m.facts;
        ImGui::Text("elongation limit %.0f\u00b0 \u00b7 field radius %.2f\u00b0", f.elongation_limit_deg, f.field_radius_deg);
        if (!f.search_epochs_year.empty()) {
            std::string epochs;
            for (double y : f.search_epochs_year) epochs += (epochs.empty() ? "" : ", ") + format_decimal_year(y, 1);
            ImGui::Text("search epoch %s", epochs.c_str());
        }
        if (m.mode == ViewerMode::trainee) {
            const Exercise& ex = *m.exercise;
            ImGui::Text("%zu observations", ex.observations.size());
            if (ImGui::BeginTable("eras", 3, ImGuiTableFlags_RowBg | ImGuiTableFlags_SizingStretchProp)) {
                ImGui::TableSetupColumn("era");
                ImGui::TableSetupColumn("years");
                ImGui::TableSetupColumn("records \u03c3");
                ImGui::TableHeadersRow();
                for (const BriefEra& e : ex.brief.eras) {
                    ImGui::TableNextRow();
                    ImGui::TableNextColumn();
                    ImGui::TextUnformatted(e.label.c_str());
                    ImGui::TableNextColumn();
                    ImGui::Text("%.0f\u2013%.0f", e.start_year, e.end_year);
                    ImGui::TableNextColumn();
                    ImGui::TextUnformatted(e.records_sigma ? "yes" : "no");
                }
                ImGui::EndTable();
            }
            return;
        }
        const ObservingPlan& plan = m.scenario.plan;
        if (ImGui::BeginTable("eras", 3, ImGuiTableFlags_RowBg | ImGuiTableFlags_SizingStretchProp)) {
            ImGui::TableSetupColumn("era");
            ImGui::TableSetupColumn("years");
            ImGui::TableSetupColumn("\u03c3 \u03bb\u00b7cos \u03b2, \u03b2");
            ImGui::TableHeadersRow();
            for (const Era& e : plan.eras) {
                ImGui::TableNextRow();
                ImGui::TableNextColumn();
                ImGui::TextUnformatted(e.label.c_str());
                ImGui::TableNextColumn();
                ImGui::Text("%.0f\u2013%.0f", e.start_year, e.end_year);
                ImGui::TableNextColumn();
                ImGui::Text("%g\u2033, %g\u2033", e.sigma_lon_arcsec, e.sigma_lat_arcsec);
            }
            ImGui::EndTable();
        }
        if (!plan.early.empty()) ImGui::TextDisabled("%zu early sightings (\u03c3 \u2248 %g\u2033)", plan.early.size(), plan.early.front().sigma_arcsec);
    }

    void draw_error(ImDrawList& list, const sf::FloatRect& area) {
        const float w = std::min(area.width - 80.0f, 640.0f);
        const ImVec2 p(area.left + (area.width - w) * 0.5f, area.top + area.height * 0.35f);
        ImFont* big = ctx_.fonts.fonts[2];
        ImFont* body = ctx_.fonts.regular();
        const ImVec2 text_size = body->CalcTextSizeA(body->FontSize, 1e9f, w - 40.0f, error_.c_str());
        list.AddRectFilled(ImVec2(p.x, p.y), ImVec2(p.x + w, p.y + text_size.y + 90.0f), IM_COL32(28, 20, 22, 235), 8.0f);
        list.AddRect(ImVec2(p.x, p.y), ImVec2(p.x + w, p.y + text_size.y + 90.0f), im_color(palette::vermillion), 8.0f, 0, 2.0f);
        list.AddText(big, big->FontSize, ImVec2(p.x + 20, p.y + 18), im_color(palette::vermillion), "Cannot show this input");
        list.AddText(body, body->FontSize, ImVec2(p.x + 20, p.y + 60), im_color(palette::text), error_.c_str(), nullptr, w - 40.0f);
    }

    bool save_screenshot() {
        sf::Texture shot;
        const sf::Vector2u s = window_->getSize();
        if (!shot.create(s.x, s.y)) return false;
        shot.update(*window_);
        return shot.copyToImage().saveToFile(opt_.screenshot);
    }

    int loop() {
        int frame = 0;
        int status = 0;
        sf::Clock frame_clock, idle_clock;
        while (window_->isOpen()) {
            frame_clock.restart();
            sf::Event e;
            bool any_event = false;
            while (window_->pollEvent(e)) {
                handle_event(e);
                any_event = true;
            }
            if (!window_->isOpen()) break;
            // The trainee's work in worker threads: take what finished, start what is due. A screenshot waits
            // for all of it (those frames are neither counted nor timed).
            bool waiting = false;
            if (model_ && model_->analysis) {
                Analysis& a = *model_->analysis;
                a.poll(*model_, controls_);
                // --minimum picks from the run's solution with --run-solve, else from the folder's.
                if (pending_minimum_ && a.solution && !a.solve_job.running() && (!opt_.run_solve || a.source == SolutionSource::run)) {
                    if (static_cast<std::size_t>(*pending_minimum_) < a.solution->minima.size()) controls_.selected_minimum = *pending_minimum_;
                    else std::cerr << "wayward-view: --minimum " << *pending_minimum_ + 1 << ": the solution has " << a.solution->minima.size() << " minima\n";
                    pending_minimum_.reset();
                }
                waiting = a.busy(*model_, controls_) || (headless() && pending_minimum_ && (a.solve_job.running() || a.fit_job.running()));
                if (waiting) idle_clock.restart();
            }
            if (headless() && waiting) {
                if (wait_clock_.getElapsedTime() > sf::seconds(1800.0f)) {
                    std::cerr << "wayward-view: gave up waiting for the background work after 30 minutes\n";
                    return 2;
                }
                sf::sleep(sf::milliseconds(5));
            }
            // Nothing moving and nobody touching it for a second: redraw at ~15 frames a second, not 60.
            if (any_event || controls_.playing || canvas_drag_) idle_clock.restart();
            if (!headless() && idle_clock.getElapsedTime() > sf::seconds(1.0f)) sf::sleep(sf::milliseconds(50));
            const float fixed_dt = 1.0f / 60.0f;
            bridge_begin_frame(bridge_, window_->getSize(), headless() ? fixed_dt : 0.0f);
            const float dt = ImGui::GetIO().DeltaTime;
            if (model_ && controls_.playing) {
                step_time(controls_.speed_days_per_second * dt);
                if (controls_.time_days >= model_->t_end()) controls_.playing = false;
            }
            sidebar();

            const sf::FloatRect area = canvas();
            ImDrawList& list = *ImGui::GetBackgroundDrawList();
            window_->pushGLStates();
            window_->clear(palette::background);
            sf::View view(area);
            const sf::Vector2u s = window_->getSize();
            const float sw = static_cast<float>(s.x), sh = static_cast<float>(s.y);
            view.setViewport({area.left / sw, area.top / sh, area.width / sw, area.height / sh});
            window_->setView(view);
            if (model_) panel().draw(*window_, list, area, controls_, *model_, ctx_);
            else draw_error(list, area);
            window_->setView(sf::View(sf::FloatRect(0, 0, static_cast<float>(s.x), static_cast<float>(s.y))));
            window_->popGLStates();
            bridge_render(bridge_, *window_);

            if (headless() && waiting) {
                window_->display();
                continue;
            }
            ++frame;
            if (headless() && frame >= opt_.frames) {
                if (!save_screenshot()) {
                    std::cerr << "wayward-view: could not write the screenshot " << opt_.screenshot << "\n";
                    status = 2;
                } else if (!model_ || refused_) {
                    status = 2;  // the screenshot shows the message; the run still failed
                }
                window_->close();
                frame_ms_.push_back(frame_clock.getElapsedTime().asSeconds() * 1000.0);
                break;
            }
            window_->display();
            frame_ms_.push_back(frame_clock.getElapsedTime().asSeconds() * 1000.0);
        }
        if (headless() && status == 0 && frame_ms_.size() > 1) {
            const std::vector<double> steady(frame_ms_.begin() + 1, frame_ms_.end());
            double mean = 0.0;
            for (double v : steady) mean += v;
            mean /= static_cast<double>(steady.size());
            std::printf("wayward-view: %s, panel %s, %ux%u, %zu stars: %d frames, after the first mean %.2f ms, median %.2f ms per frame\n",
                        opt_.screenshot.c_str(), panel().name(), opt_.width, opt_.height, model_ ? model_->stars.size() : 0,
                        frame, mean, median(steady));
            std::printf("wayward-view: sidebar content %.0f px, window %.0f px, scrolls %.0f px\n", sidebar_content_h_, sidebar_window_h_,
                        sidebar_scroll_max_);
        }
        return status;
    }
};

}  // namespace

int run_viewer(const AppOptions& options) { return App(options).run(); }

}  // namespace wayward::viewer
