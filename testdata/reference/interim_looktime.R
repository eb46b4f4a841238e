# When the events of a look are expected, under uniform entry and
# exponential survival and dropout (Lachin & Foulkes 1986): the calendar
# time tau, from the first entry, at which the expected events of both
# arms reach a look's count. Each participant entered at u (uniform over
# the accrual period A) has by tau an event with probability
# lambda/(lambda+eta) (1 - exp(-(lambda+eta)(tau-u))).
# Run: Rscript interim_looktime.R > interim_looktime.out
events_by <- function(tau, n, lambda, eta, A) {
  upto <- min(tau, A)
  sum(sapply(seq_along(n), function(g) {
    f <- function(u) lambda[g] / (lambda[g] + eta) * (1 - exp(-(lambda[g] + eta) * (tau - u)))
    n[g] / A * integrate(f, 0, upto, rel.tol = 1e-12)$value
  }))
}
case <- function(name, n, median_control, hr, dropout, A, F, events) {
  lc <- log(2) / median_control
  lambda <- c(hr * lc, lc)
  eta <- -log(1 - dropout)
  tau <- uniroot(function(t) events_by(t, n, lambda, eta, A) - events, c(1e-9, A + F), tol = 1e-12)$root
  entered <- min(tau, A) / A
  cat(sprintf("%s tau %.9f entered %.9f end_events %.9f\n", name, tau, entered, events_by(A + F, n, lambda, eta, A)))
}
# The invented offloading-boot trial (examples/trial-interim-foot-ulcer.yaml):
# 383 a group, control median 20 months, hazard ratio 0.7, 1% dropout a
# month, accrual 24, follow-up 12; looks at 136 and 238 events.
case("foot_ulcer_look1", c(383, 383), 20, 0.7, 0.01, 24, 12, 136)
case("foot_ulcer_look2", c(383, 383), 20, 0.7, 0.01, 24, 12, 238)
