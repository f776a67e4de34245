// TOML tables of orbital elements (degrees), vectors and the star, shared by the brief (exercise/) and the answer key
// (truth/): one writer and one validating reader, so both files spell an orbit the same way.
#pragma once

#include <string>

#include <toml++/toml.h>

#include "sim/io/toml_reader.hpp"
#include "sim/physics/elements.hpp"

namespace wayward::detail {

toml::array vec_array(const Vec3& v);
toml::table elements_table(const Elements& el);
std::string toml_text(const toml::table& t);
// The inverse of elements_table: a bound orbit's elements in degrees, validated (errors name file, line, field).
Elements read_elements(TableReader& r);

// The [star] table of a brief, an answer key or a record: its name and mass (solar masses, positive), validated.
struct StarTable {
    std::string name;
    double mass = 1.0;
};
StarTable read_star_table(TableReader& root);
toml::table star_table(const std::string& name, double mass);

}  // namespace wayward::detail
