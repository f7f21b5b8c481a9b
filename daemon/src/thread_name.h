// Names the calling thread, so `top -H`, `ps -L` and /proc/PID/task/*/comm show which part of the
// daemon spends the CPU (and the end-to-end bench can tell the processing threads from the rest).
// Linux keeps at most 15 characters; longer names are cut.
#pragma once

#include <pthread.h>

#include <string>

namespace spinward::daemon {

inline void NameThisThread(const std::string& name) {
  ::pthread_setname_np(::pthread_self(), name.substr(0, 15).c_str());
}

}  // namespace spinward::daemon
