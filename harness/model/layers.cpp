#include "harness/model/layers.hpp"

#include <algorithm>
#include <cmath>
#include <numeric>
#include <stdexcept>
#include <utility>
#include <Eigen/Eigenvalues>

namespace plateau {

LayerStack::LayerStack(double f0_, std::vector<double> thickness_m, std::vector<double> gprime_m_s2)
    : n(static_cast<int>(thickness_m.size())),
      f0(f0_),
      h(std::move(thickness_m)),
      gprime(std::move(gprime_m_s2)) {
  if (n < 1 || static_cast<int>(gprime.size()) != n - 1) {
    throw std::invalid_argument("LayerStack: need n thicknesses and n - 1 reduced gravities");
  }
  s = Eigen::MatrixXd::Zero(n, n);
  for (int k = 0; k < n; ++k) {
    const auto uk = static_cast<std::size_t>(k);
    if (k > 0) {
      const double c = f0 * f0 / (h[uk] * gprime[uk - 1]);
      s(k, k - 1) += c;
      s(k, k) -= c;
    }
    if (k < n - 1) {
      const double c = f0 * f0 / (h[uk] * gprime[uk]);
      s(k, k + 1) += c;
      s(k, k) -= c;
    }
  }
  // S is similar to a symmetric matrix: D^(1/2) S D^(-1/2) with D = diag(H) is symmetric, so
  // its eigenvalues are real and the symmetric solver gives orthogonal, well-conditioned modes.
  Eigen::VectorXd sq(n);
  for (int k = 0; k < n; ++k) sq(k) = std::sqrt(h[static_cast<std::size_t>(k)]);
  const Eigen::MatrixXd sym = sq.asDiagonal() * s * sq.cwiseInverse().asDiagonal();
  const Eigen::MatrixXd symm = 0.5 * (sym + sym.transpose());
  Eigen::SelfAdjointEigenSolver<Eigen::MatrixXd> es(symm);
  // Eigenvalues of S are -lambda; sort lambda ascending (barotropic first).
  std::vector<int> order(static_cast<std::size_t>(n));
  std::iota(order.begin(), order.end(), 0);
  const Eigen::VectorXd& ev = es.eigenvalues();
  std::sort(order.begin(), order.end(), [&](int a, int b) { return -ev(a) < -ev(b); });
  lambda.resize(n);
  p.resize(n, n);
  for (int m = 0; m < n; ++m) {
    const int src = order[static_cast<std::size_t>(m)];
    lambda(m) = std::max(0.0, -ev(src));
    Eigen::VectorXd v = sq.cwiseInverse().asDiagonal() * es.eigenvectors().col(src);
    // Normalise each mode to unit value in the top layer's sign and unit max amplitude.
    const double big = v.cwiseAbs().maxCoeff();
    v /= (v(0) < 0 ? -big : big);
    p.col(m) = v;
  }
  lambda(0) = 0.0;  // exactly: the barotropic mode has no stretching
  p.col(0).setOnes();
  p_inv = p.inverse();
}

std::vector<double> LayerStack::deformation_radii() const {
  std::vector<double> out;
  for (int m = 1; m < n; ++m) out.push_back(1.0 / std::sqrt(lambda(m)));
  return out;
}

double LayerStack::total_depth() const { return std::accumulate(h.begin(), h.end(), 0.0); }

}  // namespace plateau
