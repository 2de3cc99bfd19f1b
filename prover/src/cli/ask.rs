//! `classcert ask`: the exponents of one class over a certificate's
//! generators and its order, printed and written as an answer file that
//! `classcert-verify CERT --answer FILE` checks.

use super::exit::{fail, Exit};
use classcert_format::json::Json;
use classcert_prover::ask::{certified, parse_form, prime_form, Asked, Certified};
use classcert_prover::ProveError;
use classcert_verifier::report::json::{generator, SCHEMA};
use classcert_verifier::report::{generator_text, invariants_text, GeneratorView};
use rug::Integer;
use std::path::PathBuf;
use std::process::ExitCode;

/// The arguments of `ask`.
#[derive(clap::Args)]
pub struct AskArgs {
    /// The certificate: a full (relations) certificate of an order with
    /// D < 0, signed or not. It is not checked here: classcert-verify
    /// CERT --answer FILE checks the certificate and the answer.
    cert: PathBuf,
    /// The class of this form, written "(a, b, c)" (b^2 - 4ac = D, a > 0,
    /// gcd(a, b, c) = 1; quote it). (1, D mod 2, ...) asks whether a form
    /// is principal: the answer is then e = 0.
    #[arg(
        long,
        value_name = "(a, b, c)",
        required_unless_present = "prime",
        conflicts_with = "prime",
        allow_hyphen_values = true
    )]
    class: Option<String>,
    /// Instead of --class: the prime ideal (p, (b + sqrt(D))/2) above the
    /// prime p, i.e. the form (p, b, c) with the smaller b >= 0.
    #[arg(long, value_name = "P")]
    prime: Option<u64>,
    /// Write the answer file here.
    #[arg(short, long, value_name = "FILE")]
    output: Option<PathBuf>,
    /// Seed of the random walk to a smooth form (any seed gives the same
    /// exponents; another one may find them sooner).
    #[arg(long, default_value_t = 1)]
    seed: u64,
    /// One JSON object (schema "classcert/1", kind "answer"; errors as kind "error").
    #[arg(long)]
    json: bool,
}

pub fn run(args: AskArgs) -> ExitCode {
    match answer(&args) {
        Ok(out) => {
            print!("{out}");
            Exit::Success.into()
        }
        Err((code, reason, e)) if args.json => {
            print!(
                "{}",
                classcert_prover::show::error_json(reason, &e).render()
            );
            code.into()
        }
        Err((code, _, e)) => fail(code, &e),
    }
}

/// A refusal: the exit status, the JSON reason and the message.
type Refusal = (Exit, &'static str, String);

fn answer(args: &AskArgs) -> Result<String, Refusal> {
    let prove_error = |e: ProveError| {
        let reason = match e {
            ProveError::SearchFailed(_) => "search-failed",
            ProveError::SelfCheckFailed(_) => "internal",
            _ => "usage",
        };
        (Exit::of(&e), reason, e.to_string())
    };
    let usage = |e: String| (Exit::Usage, "usage", e);
    let io = |e: String| (Exit::Usage, "io-error", e);
    let bytes = std::fs::read(&args.cert)
        .map_err(|e| io(format!("cannot read {}: {e}", args.cert.display())))?;
    let c = certified(&bytes).map_err(prove_error)?;
    let form = match (&args.class, args.prime) {
        (Some(s), _) => parse_form(s).map_err(usage)?,
        (None, Some(p)) => prime_form(&c.d, p).map_err(prove_error)?,
        (None, None) => return Err(usage("give --class \"(a, b, c)\" or --prime P".into())),
    };
    let asked = c.ask(&form, args.seed).map_err(prove_error)?;
    if let Some(path) = &args.output {
        classcert_prover::write_certificate(path, &asked.bytes).map_err(|e| {
            let why = format!("cannot write {}: {e}", path.display());
            (Exit::Failed, "io-error", why)
        })?;
    }
    Ok(match args.json {
        true => json(&c, &asked, args).render(),
        false => text(&c, &asked, args),
    })
}

fn views(c: &Certified) -> Vec<GeneratorView> {
    let g = c.generators.iter();
    g.map(|g| GeneratorView::Form(g.a.clone(), g.b.clone(), g.c.clone()))
        .collect()
}

fn text(c: &Certified, asked: &Asked, args: &AskArgs) -> String {
    let a = &asked.answer;
    let f = &a.form;
    let mut s = format!(
        "the class of ({}, {}, {}) in Cl(O_D), D = {}",
        f.a, f.b, f.c, c.d
    );
    if let Some(p) = args.prime {
        s.push_str(&format!(
            ", the prime ideal ({p}, ({} + sqrt(D))/2) above {p} (b >= 0 the smaller choice)",
            f.b
        ));
    }
    s.push('\n');
    s.push_str(&format!(
        "  certificate   {}\n",
        classcert_format::hex(&c.id)
    ));
    s.push_str(&format!(
        "  class group   {}\n",
        invariants_text(&c.invariants)
    ));
    for (i, (g, d)) in views(c).iter().zip(&c.invariants).enumerate() {
        s.push_str(&format!(
            "  g{}            {} of order {d}\n",
            i + 1,
            generator_text(g)
        ));
    }
    let terms: Vec<String> = (a.exponents.iter().enumerate())
        .filter(|(_, e)| !e.is_zero())
        .map(|(i, e)| format!("g{}^{e}", i + 1))
        .collect();
    let exps: Vec<String> = a.exponents.iter().map(Integer::to_string).collect();
    s.push_str(&format!("  exponents     e = ({})\n", exps.join(", ")));
    match terms.is_empty() {
        true => s.push_str("  class         1: the form is principal\n"),
        false => s.push_str(&format!("  class         {}\n", terms.join(" · "))),
    }
    s.push_str(&format!("  order         {}\n", a.order));
    match &args.output {
        Some(path) => s.push_str(&format!(
            "wrote {} ({} bytes); classcert-verify {} --answer {} checks it\n",
            path.display(),
            asked.bytes.len(),
            args.cert.display(),
            path.display()
        )),
        None => s.push_str(
            "(not checked: -o FILE writes the answer for classcert-verify CERT --answer FILE)\n",
        ),
    }
    s
}

fn json(c: &Certified, asked: &Asked, args: &AskArgs) -> Json {
    let a = &asked.answer;
    let num = |x: &Integer| Json::str(x.to_string());
    let mut e = vec![
        ("schema", Json::str(SCHEMA)),
        ("kind", Json::str("answer")),
        (
            "certificate_sha256",
            Json::str(classcert_format::hex(&c.id)),
        ),
        ("discriminant", num(&c.d)),
        (
            "form",
            Json::Arr(vec![num(&a.form.a), num(&a.form.b), num(&a.form.c)]),
        ),
    ];
    if let Some(p) = args.prime {
        e.push(("prime", Json::str(p.to_string())));
    }
    let gens = views(c);
    let gens = gens
        .iter()
        .enumerate()
        .map(|(i, g)| generator(c.invariants.get(i), g));
    e.push((
        "invariants",
        Json::Arr(c.invariants.iter().map(num).collect()),
    ));
    e.push(("generators", Json::Arr(gens.collect())));
    e.push((
        "exponents",
        Json::Arr(a.exponents.iter().map(num).collect()),
    ));
    e.push(("order", num(&a.order)));
    e.push(("principal", Json::Bool(a.order == 1)));
    if let Some(path) = &args.output {
        e.push(("answer_file", Json::str(path.display().to_string())));
    }
    Json::obj(e)
}
