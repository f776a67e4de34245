// libFuzzer harness: the record reader (sim/record). One input holds record.toml, positions.csv and observer.csv
// separated by the byte 0x1E (missing parts are empty files).
#include "fuzz_common.hpp"
#include "sim/record/record.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    const std::string text = wayward::fuzz::text_of(data, size);
    wayward::RecordTexts parts;
    std::string* slots[3] = {&parts.record_toml, &parts.positions_csv, &parts.observer_csv};
    std::size_t start = 0;
    for (int k = 0; k < 3 && start <= text.size(); ++k) {
        const std::size_t end = k < 2 ? std::min(text.find('\x1e', start), text.size()) : text.size();
        *slots[k] = text.substr(start, end - start);
        start = end + 1;
    }
    return wayward::fuzz::check_reader([&] { wayward::parse_record(parts, "record"); });
}
