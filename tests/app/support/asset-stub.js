// Jest stand-in for binary assets metro serves as files (fonts): the module's value is its name.
module.exports = 'asset-stub';
