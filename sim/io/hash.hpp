// SHA-256 (FIPS 180-4) of bytes and files, through OpenSSL's libcrypto. Used to seal the answer key: the
// brief carries the key's digest, so anyone can check that the key was not changed after predictions were made.
#pragma once

#include <string>

namespace wayward {

std::string sha256_hex(const std::string& bytes);
std::string sha256_file(const std::string& path);  // throws std::runtime_error if unreadable

}  // namespace wayward
