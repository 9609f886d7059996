// SHA-256 (io/file_hash.hpp) against published example digests and against Python's hashlib.
#include "planmill/io/file_hash.hpp"

#include <gtest/gtest.h>

#include <cstdio>
#include <random>
#include <sstream>
#include <string>

#include "planmill/base/error.hpp"
#include "temp_files.hpp"

namespace planmill {
namespace {

// FIPS 180-2, appendix B (SHA-256 examples): digests of "abc", of the 448-bit message and of one
// million 'a'. [from memory]
TEST(Sha256, FipsExampleAbc) {
  EXPECT_EQ(sha256_hex("abc"), "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
}

TEST(Sha256, FipsExample448BitMessage) {
  EXPECT_EQ(sha256_hex("abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq"),
            "248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1");
}

TEST(Sha256, FipsExampleOneMillionA) {
  const std::string a(1'000'000, 'a');
  const std::string expected = "cdc76e5c9914fb9281a1c7e284d73e67f1809a48a497200e046d39ccc7112cd0";
  EXPECT_EQ(sha256_hex(a), expected);
  // The file reader hashes in 64 KiB pieces, so this also checks the digest across reads.
  test::TempDir dir;
  EXPECT_EQ(sha256_file_hex(dir.write("a.bin", a)), expected);
}

// Digest of the empty message, widely listed beside the FIPS examples. [from memory]
TEST(Sha256, EmptyMessage) {
  EXPECT_EQ(sha256_hex(""), "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855");
}

// Python's hashlib (Debian python3 via /usr/bin/python3) on random bytes, with lengths around
// the 64-byte block and the 56-byte padding boundary and across the file reader's 64 KiB pieces.
TEST(Sha256, RandomBytesMatchPythonHashlib) {
  test::TempDir dir;
  std::mt19937_64 rng(20261202);
  const std::size_t lengths[] = {1,   55,  56,   57,    63,    64,    65,
                                 119, 120, 1000, 65535, 65536, 65537, 300001};
  std::string names;
  std::vector<std::string> files, expected;
  for (std::size_t i = 0; i < std::size(lengths); ++i) {
    std::string bytes(lengths[i], '\0');
    for (char& c : bytes) c = static_cast<char>(rng() & 0xFF);
    files.push_back(dir.write("r" + std::to_string(i) + ".bin", bytes));
    expected.push_back(sha256_hex(bytes));
  }
  const std::string script =
      dir.write("hash.py",
                "import hashlib, sys\n"
                "for p in sys.argv[1:]:\n"
                "    print(hashlib.sha256(open(p, 'rb').read()).hexdigest())\n");
  std::string command = "/usr/bin/python3 " + script;
  for (const auto& f : files) command += " " + f;
  FILE* pipe = ::popen(command.c_str(), "r");
  ASSERT_NE(pipe, nullptr);
  std::string output;
  char buffer[256];
  while (std::fgets(buffer, sizeof buffer, pipe)) output += buffer;
  ASSERT_EQ(::pclose(pipe), 0) << command;
  std::istringstream lines(output);
  for (std::size_t i = 0; i < files.size(); ++i) {
    std::string from_python;
    ASSERT_TRUE(std::getline(lines, from_python)) << "python printed " << i << " digests";
    EXPECT_EQ(expected[i], from_python) << lengths[i] << " bytes";
    EXPECT_EQ(sha256_file_hex(files[i]), from_python) << lengths[i] << " bytes";
  }
}

TEST(Sha256, MissingFileIsAnInputErrorNamingIt) {
  test::TempDir dir;
  const std::string missing = (dir.path() / "nope.bin").string();
  test::expect_input_error([&] { (void)sha256_file_hex(missing); }, missing, 0, "");
}

}  // namespace
}  // namespace planmill
