// SHA-256 digests (FIPS 180-4) as 64 lowercase hexadecimal characters, computed with OpenSSL's
// libcrypto. Model files record the digest of the recording they were fitted to, so a later
// command can tell whether the data changed.
#ifndef LOOPWRIGHT_IO_SHA256_H_
#define LOOPWRIGHT_IO_SHA256_H_

#include <string>
#include <string_view>

namespace lw {

// Digest of the bytes.
std::string Sha256Hex(std::string_view bytes);

// Digest of the file's contents, read in chunks. Throws DataError("cannot read 'PATH': <reason>")
// when the file cannot be opened or read.
std::string Sha256OfFile(const std::string& path);

}  // namespace lw

#endif  // LOOPWRIGHT_IO_SHA256_H_
