// Shared by the viewer render tests: run wayward-view in screenshot mode and load the PNG it writes.
#pragma once

#include <filesystem>
#include <string>

#include <SFML/Graphics/Image.hpp>

#include <unistd.h>

#include "test_helpers.hpp"

namespace wayward::testing {

struct Shot {
    CommandResult run;
    sf::Image image;
    bool loaded = false;
};

// A fresh scratch folder for this test process, named by `tag`.
inline std::filesystem::path fresh_shot_dir(const std::string& tag) {
    const std::filesystem::path d = std::filesystem::temp_directory_path() / (tag + "-" + std::to_string(::getpid()));
    std::filesystem::remove_all(d);
    std::filesystem::create_directories(d);
    return d;
}

inline Shot take_screenshot(const std::filesystem::path& dir, const std::string& args, const std::string& name) {
    const std::filesystem::path png = dir / name;
    std::filesystem::remove(png);
    Shot s;
    s.run = run_command(std::string(WAYWARD_VIEW) + " " + args + " --screenshot " + png.string());
    s.loaded = std::filesystem::exists(png) && s.image.loadFromFile(png.string());
    return s;
}

}  // namespace wayward::testing
