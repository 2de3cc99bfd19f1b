use classcert_prover::fb::FactorBase;
use classcert_prover::search::Searcher;
use classcert_verifier::arith::primes_up_to;
use rug::Integer;
fn main() {
    let d: Integer = "-100000000000000003".parse().unwrap();
    let primes = primes_up_to(20000);
    let fb = FactorBase::new(&d, &primes, 20000, &[]);
    println!("n={}", fb.len());
    let mut s = Searcher::new(&d, &fb, 48, 1);
    for i in [48usize, 60, 100, 500] {
        let t = std::time::Instant::now();
        let r = s.elimination(i, 200000);
        println!("{i} p={} {:?} attempts={} {:?}", fb.primes[i], r.map(|r| r.len()), s.attempts, t.elapsed());
    }
    let t = std::time::Instant::now();
    let r = s.relation(200000);
    println!("rel {:?} attempts={} {:?}", r, s.attempts, t.elapsed());
}
