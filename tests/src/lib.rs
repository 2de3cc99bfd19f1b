pub mod forge;
pub mod oracle;
pub mod support;
