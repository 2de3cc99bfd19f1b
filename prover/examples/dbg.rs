use classcert_prover::fb::FactorBase;
use classcert_prover::search::Searcher;
use classcert_verifier::arith::primes_up_to;
use rug::Integer;
fn main() {
    let d: Integer = "-12566370614359172953850573533118011537972"
        .parse()
        .unwrap();
    let primes = primes_up_to(60000);
    let fb = FactorBase::new(&d, &primes, 51152, &[]);
    let mut s = Searcher::new(&d, &fb, 262, 1);
    for _ in 0..4 {
        s.relation(1_000_000);
    }
}
