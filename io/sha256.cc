// See sha256.h. Uses the EVP digest interface of OpenSSL 3.
#include "io/sha256.h"

#include <fcntl.h>
#include <openssl/evp.h>
#include <unistd.h>

#include <cerrno>
#include <cstring>
#include <memory>
#include <vector>

#include "lti/error.h"

namespace lw {
namespace {

struct ContextDeleter {
  void operator()(EVP_MD_CTX* ctx) const { EVP_MD_CTX_free(ctx); }
};

class Hasher {
 public:
  Hasher() : ctx_(EVP_MD_CTX_new()) {
    if (!ctx_ || EVP_DigestInit_ex(ctx_.get(), EVP_sha256(), nullptr) != 1)
      throw JobFailed("SHA-256 is not available from OpenSSL");
  }
  void Update(const void* data, size_t size) {
    if (EVP_DigestUpdate(ctx_.get(), data, size) != 1) throw JobFailed("SHA-256 update failed");
  }
  std::string HexDigest() {
    unsigned char digest[EVP_MAX_MD_SIZE];
    unsigned int size = 0;
    if (EVP_DigestFinal_ex(ctx_.get(), digest, &size) != 1)
      throw JobFailed("SHA-256 finalisation failed");
    static const char kHex[] = "0123456789abcdef";
    std::string hex;
    hex.reserve(2 * size);
    for (unsigned int i = 0; i < size; ++i) {
      hex.push_back(kHex[digest[i] >> 4]);
      hex.push_back(kHex[digest[i] & 15]);
    }
    return hex;
  }

 private:
  std::unique_ptr<EVP_MD_CTX, ContextDeleter> ctx_;
};

}  // namespace

std::string Sha256Hex(std::string_view bytes) {
  Hasher h;
  h.Update(bytes.data(), bytes.size());
  return h.HexDigest();
}

std::string Sha256OfFile(const std::string& path) {
  const int fd = open(path.c_str(), O_RDONLY | O_CLOEXEC);
  if (fd < 0) throw DataError("cannot read '" + path + "': " + std::strerror(errno));
  Hasher h;
  std::vector<char> chunk(1 << 20);
  while (true) {
    const ssize_t n = read(fd, chunk.data(), chunk.size());
    if (n < 0) {
      if (errno == EINTR) continue;
      const int error_number = errno;
      close(fd);
      throw DataError("cannot read '" + path + "': " + std::strerror(error_number));
    }
    if (n == 0) break;
    h.Update(chunk.data(), static_cast<size_t>(n));
  }
  close(fd);
  return h.HexDigest();
}

}  // namespace lw
