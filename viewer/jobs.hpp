// Work in a worker thread for the viewer: one job runs one function off the frame loop (the known-bodies fit,
// the solver, the reveal, scoring) and reports its stage and progress; the frame loop polls it and takes the
// result when it is done. A job can be asked to cancel (the function sees the flag through its JobControl and
// decides when to stop). Destroying a running job asks it to cancel and waits for it.
#pragma once

#include <atomic>
#include <exception>
#include <functional>
#include <memory>
#include <mutex>
#include <optional>
#include <string>
#include <thread>
#include <utility>

namespace wayward::viewer {

// What the running function sees: where it is, and whether it should stop.
class JobControl {
public:
    // fraction in [0, 1], or < 0 when the work cannot say how far along it is.
    void report(const std::string& stage, double fraction) {
        std::lock_guard<std::mutex> lock(mutex_);
        stage_ = stage;
        fraction_ = fraction;
    }
    const std::atomic<bool>& cancel_flag() const { return cancel_; }
    bool cancelled() const { return cancel_.load(); }

    void request_cancel() { cancel_.store(true); }
    std::pair<std::string, double> progress() const {
        std::lock_guard<std::mutex> lock(mutex_);
        return {stage_, fraction_};
    }

private:
    std::atomic<bool> cancel_{false};
    mutable std::mutex mutex_;
    std::string stage_;
    double fraction_ = -1.0;
};

enum class JobState { idle, running, done, failed, cancelled };

template <class T>
class Job {
public:
    using Work = std::function<T(JobControl&)>;

    Job() = default;
    Job(const Job&) = delete;
    Job& operator=(const Job&) = delete;
    Job(Job&&) noexcept = default;
    Job& operator=(Job&& other) noexcept {
        if (this != &other) {
            stop();
            shared_ = std::move(other.shared_);
            thread_ = std::move(other.thread_);
            taken_ = other.taken_;
        }
        return *this;
    }
    ~Job() { stop(); }

    // Starts `work` in a new thread (waiting first for any previous run to end).
    void start(Work work) {
        stop();
        shared_ = std::make_shared<Shared>();
        taken_ = false;
        std::shared_ptr<Shared> s = shared_;
        thread_ = std::thread([s, work = std::move(work)] {
            try {
                T value = work(s->control);
                std::lock_guard<std::mutex> lock(s->mutex);
                s->value = std::move(value);
                s->state = s->control.cancelled() ? JobState::cancelled : JobState::done;
            } catch (const std::exception& e) {
                std::lock_guard<std::mutex> lock(s->mutex);
                s->error = e.what();
                s->state = s->control.cancelled() ? JobState::cancelled : JobState::failed;
            } catch (...) {
                std::lock_guard<std::mutex> lock(s->mutex);
                s->error = "unknown error";
                s->state = JobState::failed;
            }
        });
    }

    JobState state() const {
        if (!shared_) return JobState::idle;
        std::lock_guard<std::mutex> lock(shared_->mutex);
        return shared_->state;
    }
    bool running() const { return state() == JobState::running; }
    // Done and its value not yet taken.
    bool ready() const { return !taken_ && state() == JobState::done; }
    // Ended (done, failed or cancelled) and not yet taken: take() clears it.
    bool ended() const {
        const JobState s = state();
        return !taken_ && (s == JobState::done || s == JobState::failed || s == JobState::cancelled);
    }

    // The value of a finished run (once); empty for a failed or cancelled one, whose message is in error().
    std::optional<T> take() {
        if (!shared_ || taken_) return std::nullopt;
        {
            std::lock_guard<std::mutex> lock(shared_->mutex);
            if (shared_->state == JobState::running) return std::nullopt;
        }
        if (thread_.joinable()) thread_.join();
        taken_ = true;
        std::lock_guard<std::mutex> lock(shared_->mutex);
        return std::move(shared_->value);
    }
    std::string error() const {
        if (!shared_) return {};
        std::lock_guard<std::mutex> lock(shared_->mutex);
        return shared_->error;
    }

    void cancel() {
        if (shared_) shared_->control.request_cancel();
    }
    bool cancel_requested() const { return shared_ && shared_->control.cancelled(); }
    std::pair<std::string, double> progress() const { return shared_ ? shared_->control.progress() : std::pair<std::string, double>{}; }

    // Blocks until the run ends (for tests and headless runs).
    void wait() {
        if (thread_.joinable()) thread_.join();
    }

private:
    struct Shared {
        JobControl control;
        mutable std::mutex mutex;
        JobState state = JobState::running;
        std::optional<T> value;
        std::string error;
    };
    std::shared_ptr<Shared> shared_;
    std::thread thread_;
    bool taken_ = false;

    void stop() {
        if (thread_.joinable()) {
            cancel();
            thread_.join();
        }
    }
};

}  // namespace wayward::viewer
