#include "stepgate/data/sha256.hpp"

#include <openssl/evp.h>

#include <cerrno>
#include <cstdio>
#include <cstring>
#include <memory>
#include <stdexcept>

#include "stepgate/core/error.hpp"
#include "stepgate/core/input_file.hpp"

namespace stepgate {
namespace {

std::string to_hex(const unsigned char* digest, unsigned int length) {
  static constexpr char kDigits[] = "0123456789abcdef";
  std::string hex(2 * length, '0');
  for (unsigned int i = 0; i < length; ++i) {
    hex[2 * i] = kDigits[digest[i] >> 4];
    hex[2 * i + 1] = kDigits[digest[i] & 0x0f];
  }
  return hex;
}

struct MdCtxFree {
  void operator()(EVP_MD_CTX* ctx) const { EVP_MD_CTX_free(ctx); }
};
struct FileClose {
  void operator()(std::FILE* f) const { std::fclose(f); }
};

}  // namespace

std::string sha256_hex(std::string_view bytes) {
  unsigned char digest[EVP_MAX_MD_SIZE];
  unsigned int length = 0;
  if (EVP_Digest(bytes.data(), bytes.size(), digest, &length, EVP_sha256(), nullptr) != 1)
    throw ToolError("OpenSSL EVP_Digest(SHA-256) failed");
  return to_hex(digest, length);
}

std::string sha256_file(const std::string& path) { return sha256_files({path}); }

std::string sha256_files(const std::vector<std::string>& paths) {
  std::unique_ptr<EVP_MD_CTX, MdCtxFree> ctx(EVP_MD_CTX_new());
  if (!ctx || EVP_DigestInit_ex(ctx.get(), EVP_sha256(), nullptr) != 1)
    throw ToolError("OpenSSL EVP_DigestInit_ex(SHA-256) failed");
  std::string block(1 << 16, '\0');
  for (const std::string& path : paths) {
    remember_input(path);
    std::unique_ptr<std::FILE, FileClose> file(std::fopen(path.c_str(), "rb"));
    if (!file) throw InputError(path, std::string("cannot open the file: ") + std::strerror(errno));
    std::size_t got;
    while ((got = std::fread(block.data(), 1, block.size(), file.get())) > 0)
      if (EVP_DigestUpdate(ctx.get(), block.data(), got) != 1)
        throw ToolError("OpenSSL EVP_DigestUpdate failed");
    if (std::ferror(file.get())) throw InputError(path, "cannot read the file (I/O error)");
  }
  unsigned char digest[EVP_MAX_MD_SIZE];
  unsigned int length = 0;
  if (EVP_DigestFinal_ex(ctx.get(), digest, &length) != 1)
    throw ToolError("OpenSSL EVP_DigestFinal_ex failed");
  return to_hex(digest, length);
}

}  // namespace stepgate
