// libFuzzer harness: the answer key reader past its digest check (sim/truth), and the true system built from it.
#include "fuzz_common.hpp"
#include "sim/truth/answer_key.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    return wayward::fuzz::check_reader([&] {
        const wayward::AnswerKey k = wayward::parse_answer_key(wayward::fuzz::text_of(data, size), "answer_key.toml");
        k.system();
        k.hidden_index();
    });
}
