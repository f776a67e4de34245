// Errors raised at the input boundary. They name the file, the line and the field, so a user can fix the input.
#pragma once

#include <stdexcept>
#include <string>

namespace wayward {

class InputError : public std::runtime_error {
public:
    InputError(std::string file, long line, std::string field, const std::string& message)
        : std::runtime_error(format(file, line, field, message)), file_(std::move(file)), line_(line),
          field_(std::move(field)), message_(message) {}
    const std::string& file() const { return file_; }
    long line() const { return line_; }
    const std::string& field() const { return field_; }
    const std::string& message() const { return message_; }  // without the file, line and field

private:
    static std::string format(const std::string& file, long line, const std::string& field, const std::string& msg);
    std::string file_;
    long line_;
    std::string field_;
    std::string message_;
};

// A long computation stopped because its caller asked it to (a cancel flag): not an error of the input or the
// computation. Stages throw it once, at the top of the stage; inner loops return an outcome instead.
class Cancelled : public std::runtime_error {
public:
    Cancelled() : std::runtime_error("cancelled") {}
};

}  // namespace wayward
