// doctest's main for the viewer tests (their own executable: they link SFML and ImGui). CTest runs it once per
// suite with --test-suite; a filter that matches no test case is an error here, so a renamed suite cannot pass
// by running nothing.
#define DOCTEST_CONFIG_IMPLEMENT
#include <doctest/doctest.h>

#include <cstdio>

namespace {

int cases_run = 0;

struct CountCases : doctest::IReporter {
    explicit CountCases(const doctest::ContextOptions&) {}
    void report_query(const doctest::QueryData&) override {}
    void test_run_start() override {}
    void test_run_end(const doctest::TestRunStats& stats) override {
        cases_run = static_cast<int>(stats.numTestCasesPassingFilters);
    }
    void test_case_start(const doctest::TestCaseData&) override {}
    void test_case_reenter(const doctest::TestCaseData&) override {}
    void test_case_end(const doctest::CurrentTestCaseStats&) override {}
    void test_case_exception(const doctest::TestCaseException&) override {}
    void subcase_start(const doctest::SubcaseSignature&) override {}
    void subcase_end() override {}
    void log_assert(const doctest::AssertData&) override {}
    void log_message(const doctest::MessageData&) override {}
    void test_case_skipped(const doctest::TestCaseData&) override {}
};

}  // namespace

REGISTER_LISTENER("count_cases", 1, CountCases);

int main(int argc, char** argv) {
    doctest::Context context(argc, argv);
    const int status = context.run();
    if (context.shouldExit()) return status;
    if (status == 0 && cases_run == 0) {
        std::fprintf(stderr, "wayward_viewer_tests: no test case matched the filters\n");
        return 1;
    }
    return status;
}
