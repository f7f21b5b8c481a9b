// FFTW plans, made once per length. fftw_plan_* and fftw_destroy_plan touch FFTW's global planner
// state and are not thread-safe, so every such call in the process goes through one planner mutex
// (shared by all caches, not just one cache's map lock). fftw_execute_dft_r2c on new arrays is
// thread-safe and allocates nothing; the arrays must have the alignment the plan was made with,
// which fftw_malloc guarantees for both the planning scratch and the callers' AlignedBuffers.
//
// Plans use FFTW_ESTIMATE: planning takes milliseconds and never writes to the arrays. Measured
// side by side in one run (FFTW 3.3.10, shared 2-core machine under load): FFTW_MEASURE planned
// for 0.6-1.9 s per length, with every channel's start-up waiting on the planner mutex, and then
// ran 4 % (n = 4096) to 35 % (n = 3000) faster. A 4096-point transform is about 15 of the ~44 us a
// segment costs in total, so MEASURE would save about 1 us per segment: not worth the start-up.

#include "spinward/estimators/fft_plan_cache.h"

#include <fftw3.h>

#include <new>
#include <utility>

namespace spinward::estimators {
namespace {

std::mutex& PlannerMutex() {
  static std::mutex mutex;
  return mutex;
}

}  // namespace

AlignedBuffer::AlignedBuffer(std::size_t bytes) : data_(fftw_malloc(bytes == 0 ? 1 : bytes)) {
  if (data_ == nullptr) throw std::bad_alloc();
}

AlignedBuffer::AlignedBuffer(AlignedBuffer&& other) noexcept : data_(other.data_) {
  other.data_ = nullptr;
}

AlignedBuffer& AlignedBuffer::operator=(AlignedBuffer&& other) noexcept {
  if (this != &other) {
    if (data_ != nullptr) fftw_free(data_);
    data_ = other.data_;
    other.data_ = nullptr;
  }
  return *this;
}

AlignedBuffer::~AlignedBuffer() {
  if (data_ != nullptr) fftw_free(data_);
}

struct RealFft::Plan {
  fftw_plan plan = nullptr;
};

RealFft::RealFft(std::size_t length, std::unique_ptr<Plan> plan)
    : length_(length), plan_(std::move(plan)) {}

RealFft::~RealFft() {
  if (plan_ && plan_->plan != nullptr) {
    std::lock_guard<std::mutex> lock(PlannerMutex());
    fftw_destroy_plan(plan_->plan);
  }
}

void RealFft::Forward(double* in, std::complex<double>* out) const {
  // std::complex<double> and fftw_complex share their layout (C++ [complex.numbers]/4).
  fftw_execute_dft_r2c(plan_->plan, in, reinterpret_cast<fftw_complex*>(out));
}

FftPlanCache& FftPlanCache::Shared() {
  // Never destroyed: channels on other threads may still hold plans while statics are torn down.
  static FftPlanCache* cache = new FftPlanCache();
  return *cache;
}

std::shared_ptr<const RealFft> FftPlanCache::Get(std::size_t length) {
  if (length == 0) return nullptr;
  std::lock_guard<std::mutex> lock(mutex_);
  if (auto found = plans_.find(length); found != plans_.end()) return found->second;

  auto plan = std::make_unique<RealFft::Plan>();
  {
    // Planning scratch from fftw_malloc, so the plan's alignment matches every AlignedBuffer.
    AlignedBuffer in(length * sizeof(double));
    AlignedBuffer out((length / 2 + 1) * sizeof(fftw_complex));
    std::lock_guard<std::mutex> planner_lock(PlannerMutex());
    plan->plan = fftw_plan_dft_r2c_1d(static_cast<int>(length), static_cast<double*>(in.data()),
                                      static_cast<fftw_complex*>(out.data()), FFTW_ESTIMATE);
  }
  if (plan->plan == nullptr) return nullptr;
  std::shared_ptr<const RealFft> fft(new RealFft(length, std::move(plan)));
  plans_.emplace(length, fft);
  return fft;
}

std::size_t FftPlanCache::size() const {
  std::lock_guard<std::mutex> lock(mutex_);
  return plans_.size();
}

}  // namespace spinward::estimators
