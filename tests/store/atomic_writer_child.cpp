// Test helper: rewrites one file with atomic_write as fast as it can until it is killed. Each
// version is "begin N\n" + 256 KiB of the digit N%10 + "\nend N\n", so a reader can tell a
// complete version from a torn one.
#include "floc/store/files.hpp"

#include <cstdio>
#include <string>

int main(int argc, char** argv) {
    if (argc != 2) {
        std::fputs("usage: atomic_writer_child FILE\n", stderr);
        return 64;
    }
    for (unsigned long n = 1;; ++n) {
        std::string content = "begin " + std::to_string(n) + "\n";
        content.append(256U * 1024U, static_cast<char>('0' + n % 10));
        content += "\nend " + std::to_string(n) + "\n";
        if (floc::store::atomic_write(argv[1], content)) {
            return 74;
        }
    }
}
