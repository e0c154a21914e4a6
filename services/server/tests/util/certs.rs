//! Test certificates, generated afresh by each test with `rcgen` (no private key is committed):
//! a CA, a server certificate for `localhost` and 127.0.0.1 signed by it, a client certificate
//! signed by it, and a client certificate signed by another CA that the server does not trust.

use std::path::PathBuf;

use rcgen::{
    BasicConstraints, CertificateParams, CertifiedIssuer, DnType, ExtendedKeyUsagePurpose, IsCa,
    Issuer, KeyPair, KeyUsagePurpose,
};

/// PEM text of a certificate and its key.
pub struct Pem {
    /// The certificate.
    pub certificate: String,
    /// Its private key.
    pub key: String,
}

/// A small PKI in a temporary directory.
pub struct TestPki {
    /// The directory holding the files.
    pub dir: PathBuf,
    /// The trusted CA's certificate, PEM.
    pub ca_certificate: String,
    /// File of the trusted CA's certificate.
    pub ca_file: PathBuf,
    /// File of the server certificate.
    pub server_certificate_file: PathBuf,
    /// File of the server key.
    pub server_key_file: PathBuf,
    /// A client identity signed by the trusted CA.
    pub client: Pem,
    /// A client identity signed by a CA the server does not trust.
    pub rogue_client: Pem,
}

/// A self-signed CA named `name`.
fn new_ca(name: &str) -> CertifiedIssuer<'static, KeyPair> {
    let mut params = CertificateParams::new(Vec::<String>::new()).expect("CA parameters");
    params.is_ca = IsCa::Ca(BasicConstraints::Unconstrained);
    params.distinguished_name.push(DnType::CommonName, name);
    params.key_usages = vec![
        KeyUsagePurpose::KeyCertSign,
        KeyUsagePurpose::CrlSign,
        KeyUsagePurpose::DigitalSignature,
    ];
    let key = KeyPair::generate().expect("CA key");
    CertifiedIssuer::self_signed(params, key).expect("self-signed CA")
}

fn leaf(
    names: Vec<String>,
    common_name: &str,
    usage: ExtendedKeyUsagePurpose,
    issuer: &Issuer<'static, KeyPair>,
) -> Pem {
    let mut params = CertificateParams::new(names).expect("leaf parameters");
    params
        .distinguished_name
        .push(DnType::CommonName, common_name);
    params.use_authority_key_identifier_extension = true;
    params.key_usages = vec![KeyUsagePurpose::DigitalSignature];
    params.extended_key_usages = vec![usage];
    let key = KeyPair::generate().expect("leaf key");
    let certificate = params.signed_by(&key, issuer).expect("signed leaf");
    Pem {
        certificate: certificate.pem(),
        key: key.serialize_pem(),
    }
}

impl TestPki {
    /// Generates the PKI and writes the server's files under a directory named after `tag`.
    pub fn generate(tag: &str) -> TestPki {
        let dir = std::env::temp_dir().join(format!("binodal-pki-{tag}-{}", std::process::id()));
        std::fs::create_dir_all(&dir).expect("PKI directory");
        let ca = new_ca("binodal test CA");
        let ca_certificate = ca.pem();
        let server = leaf(
            vec!["localhost".to_owned(), "127.0.0.1".to_owned()],
            "binodal test server",
            ExtendedKeyUsagePurpose::ServerAuth,
            &ca,
        );
        let client = leaf(
            vec!["harrowgate-scada".to_owned()],
            "harrowgate-scada",
            ExtendedKeyUsagePurpose::ClientAuth,
            &ca,
        );
        let rogue_ca = new_ca("untrusted CA");
        let rogue_client = leaf(
            vec!["intruder".to_owned()],
            "intruder",
            ExtendedKeyUsagePurpose::ClientAuth,
            &rogue_ca,
        );
        let write = |name: &str, text: &str| {
            let path = dir.join(name);
            std::fs::write(&path, text).expect("write PEM file");
            path
        };
        TestPki {
            ca_file: write("ca.pem", &ca_certificate),
            server_certificate_file: write("server.pem", &server.certificate),
            server_key_file: write("server.key", &server.key),
            dir,
            ca_certificate,
            client,
            rogue_client,
        }
    }
}

impl Drop for TestPki {
    fn drop(&mut self) {
        std::fs::remove_dir_all(&self.dir).ok();
    }
}
